// Private to the caches (view-factor tallies, gas scores): hashing, little-endian byte
// layout and the atomic write of a cache file.
#pragma once

#include <cstdint>
#include <cstring>
#include <string>
#include <vector>

#include "hearthray/cache.hpp"
#include "hearthray/hash.hpp"

namespace hearthray {
namespace cache_io {

inline std::uint64_t rotl(std::uint64_t x, int r) {
  return (x << r) | (x >> (64 - r));
}

// Two hashes of one byte stream: FNV-1a 64 (Fowler, Noll & Vo; offset basis and prime of the
// published 64-bit variant) byte by byte, and a multiply-xorshift mix of 8-byte words.
class Hasher {
 public:
  void bytes(const void* data, std::size_t n) {
    const auto* p = static_cast<const unsigned char*>(data);
    for (std::size_t i = 0; i < n; ++i) {
      fnv_ = (fnv_ ^ p[i]) * 0x100000001b3ull;
      block_ |= std::uint64_t(p[i]) << (8 * fill_);
      if (++fill_ == 8) absorb();
    }
    length_ += n;
  }
  void u64(std::uint64_t v) {
    unsigned char b[8];
    for (int i = 0; i < 8; ++i) b[i] = static_cast<unsigned char>(v >> (8 * i));
    bytes(b, 8);
  }
  void real(double v) {
    std::uint64_t bits;
    std::memcpy(&bits, &v, sizeof bits);
    u64(bits);
  }
  void text(const std::string& s) {  // length first: "ab"+"c" differs from "a"+"bc"
    u64(s.size());
    bytes(s.data(), s.size());
  }
  TallyCacheKey finish() {
    if (fill_ > 0) absorb();
    mix_ = rotl(mix_ ^ mix64(length_), 27) * 0x9e3779b97f4a7c15ull + 0x632be59bd9b14b3bull;
    return {fnv_, mix64(mix_)};
  }

 private:
  void absorb() {
    mix_ = rotl(mix_ ^ mix64(block_), 27) * 0x9e3779b97f4a7c15ull + 0x632be59bd9b14b3bull;
    block_ = 0;
    fill_ = 0;
  }
  std::uint64_t fnv_ = 0xcbf29ce484222325ull;
  std::uint64_t mix_ = 0x243f6a8885a308d3ull;  // digits of pi: any fixed start will do
  std::uint64_t block_ = 0;
  int fill_ = 0;
  std::uint64_t length_ = 0;
};

inline void put_u64(std::string* out, std::uint64_t v) {
  for (int i = 0; i < 8; ++i) out->push_back(static_cast<char>(v >> (8 * i)));
}
inline void put_u32(std::string* out, std::uint32_t v) {
  for (int i = 0; i < 4; ++i) out->push_back(static_cast<char>(v >> (8 * i)));
}
template <typename T>
inline void put_all(std::string* out, const std::vector<T>& values) {
  for (T v : values) {
    if constexpr (sizeof(T) == 8) {
      put_u64(out, v);
    } else {
      put_u32(out, v);
    }
  }
}

// Reads little-endian integers from a byte buffer; the caller checks sizes first.
struct Cursor {
  const std::string& data;
  std::size_t at = 0;
  std::uint64_t u64() {
    std::uint64_t v = 0;
    for (int i = 0; i < 8; ++i)
      v |= std::uint64_t(static_cast<unsigned char>(data[at + i])) << (8 * i);
    at += 8;
    return v;
  }
  std::uint32_t u32() {
    std::uint32_t v = 0;
    for (int i = 0; i < 4; ++i)
      v |= std::uint32_t(static_cast<unsigned char>(data[at + i])) << (8 * i);
    at += 4;
    return v;
  }
  std::vector<double> reals(std::size_t n) {
    std::vector<double> v(n);
    for (double& x : v) {
      const std::uint64_t bits = u64();
      std::memcpy(&x, &bits, sizeof x);
    }
    return v;
  }
  template <typename T>
  std::vector<T> all(std::size_t n) {
    std::vector<T> v(n);
    for (T& x : v) x = sizeof(T) == 8 ? static_cast<T>(u64()) : static_cast<T>(u32());
    return v;
  }
};

inline TallyCacheKey payload_hash(const std::string& data, std::size_t from) {
  Hasher h;
  h.bytes(data.data() + from, data.size() - from);
  return h.finish();
}

inline std::string hex64(std::uint64_t v) {
  static const char* digits = "0123456789abcdef";
  std::string s(16, '0');
  for (int i = 15; i >= 0; --i, v >>= 4) s[static_cast<std::size_t>(i)] = digits[v & 15];
  return s;
}

// The part of every key that describes the mesh and its patches: the mesh file's bytes, the
// options it was loaded with (unit, surfaces_from, degenerate-triangle threshold), the panels
// the scene file cut out of its surfaces (name, host, centre, size, direction: they change
// the geometry that the file's bytes alone describe), and each surface's name, two-sided flag
// and patch spec.
void hash_mesh(Hasher& h, const std::string& mesh_bytes, const MeshOptions& mesh,
               const Scene& scene, const std::vector<PatchSpec>& patch_specs,
               const std::vector<PanelPlacement>& panels);

// Bytes before the sizes in every cache file's header: magic (8), layout version and flags
// (4 + 4), key (16).
inline constexpr std::size_t kHeadBytes = 32;

// Reads the cache file at `path` whole and checks its head: at least `header_bytes` long, the
// magic, the layout version and the key. Returns why it is rejected ("it is not a " + `what`,
// ...), or "" with the file in *data and its flags word in *flags.
std::string read_cache_file(const std::string& path, const char (&magic)[8], std::uint32_t layout,
                            const TallyCacheKey& key, std::size_t header_bytes,
                            const std::string& what, std::string* data, std::uint32_t* flags);

// Checks a cache file's body after its header: `fixed` bytes plus `items` records of `per_item`
// bytes (the one size a header cannot bound by the scene, checked before anything is
// allocated), and the payload from `header_bytes` on matching `checksum`. Returns why not, or "".
std::string check_cache_body(const std::string& data, std::uint64_t fixed, std::uint64_t per_item,
                             std::uint64_t items, std::size_t header_bytes,
                             const TallyCacheKey& checksum);

// Writes `data` to `path` in `dir` (created when needed) atomically: a temporary file of a
// name no other writer uses, renamed into place, so a reader never sees half a file.
// Failure is reported, not thrown.
CacheWrite write_cache_file(const std::string& dir, const std::string& path,
                            const std::string& data);

}  // namespace cache_io
}  // namespace hearthray
