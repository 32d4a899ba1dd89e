// The view-factor cache: tallies on disk under a 128-bit key. Integers are written
// little-endian byte by byte, so a file means the same on any machine; doubles as their IEEE
// bits.
#include "hearthray/cache.hpp"

#include <unistd.h>

#include <atomic>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "hearthray/error.hpp"
#include "hearthray/hash.hpp"

namespace hearthray {
namespace {

namespace fs = std::filesystem;

constexpr char kMagic[8] = {'h', 'r', 't', 'a', 'l', 'l', 'y', '\0'};
constexpr std::uint32_t kLayoutVersion = 2;
// magic, layout version + flags (1: the sobol sampler's replicate squares follow the hit
// counts), key (2), patches, surfaces, rows, emitter_begin, hits, trace seconds, payload
// hash (2).
constexpr std::size_t kHeaderBytes = 8 + 8 + 16 + 5 * 8 + 8 + 16;

std::uint64_t rotl(std::uint64_t x, int r) {
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

void put_u64(std::string* out, std::uint64_t v) {
  for (int i = 0; i < 8; ++i) out->push_back(static_cast<char>(v >> (8 * i)));
}
void put_u32(std::string* out, std::uint32_t v) {
  for (int i = 0; i < 4; ++i) out->push_back(static_cast<char>(v >> (8 * i)));
}
template <typename T>
void put_all(std::string* out, const std::vector<T>& values) {
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

TallyCacheKey payload_hash(const std::string& data, std::size_t from) {
  Hasher h;
  h.bytes(data.data() + from, data.size() - from);
  return h.finish();
}

std::string hex64(std::uint64_t v) {
  static const char* digits = "0123456789abcdef";
  std::string s(16, '0');
  for (int i = 15; i >= 0; --i, v >>= 4) s[static_cast<std::size_t>(i)] = digits[v & 15];
  return s;
}

// Every ray of every row accounted for, rows well formed, surface totals consistent.
std::string check_counts(const Tallies& t, const std::vector<std::uint64_t>& rays) {
  std::uint64_t total = 0, escaped = 0, back = 0;
  if (t.hit_offset.front() != 0) return "its first row does not start at 0";
  for (std::size_t r = 0; r < t.rows(); ++r) {
    const std::string row = "row " + std::to_string(r);
    if (r >= rays.size() || t.rays[r] != rays[r]) {
      return row + " has " + std::to_string(t.rays[r]) + " rays, expected " +
             (r < rays.size() ? std::to_string(rays[r]) : std::string("no row"));
    }
    if (t.hit_offset[r + 1] < t.hit_offset[r] || t.hit_offset[r + 1] > t.hit_patch.size()) {
      return row + " has an invalid extent";
    }
    // Each term is at most the row's rays, so the sum cannot overflow before it is checked.
    std::uint64_t sum = 0;
    auto add = [&](std::uint64_t count) {
      if (count > t.rays[r] || sum > t.rays[r]) return false;
      sum += count;
      return true;
    };
    if (!add(t.escaped[r]) || !add(t.back_face[r])) return row + " counts more rays than sent";
    for (std::uint64_t k = t.hit_offset[r]; k < t.hit_offset[r + 1]; ++k) {
      if (t.hit_patch[k] >= t.patch_count) return row + " names a patch out of range";
      if (k > t.hit_offset[r] && t.hit_patch[k] <= t.hit_patch[k - 1]) {
        return row + " is not in ascending order";
      }
      if (!add(t.hit_count[k])) return row + " counts more rays than sent";
    }
    if (sum != t.rays[r]) return row + " does not account for every ray";
    total += t.rays[r];
    escaped += t.escaped[r];
    back += t.back_face[r];
  }
  if (t.hit_offset.back() != t.hit_patch.size()) return "its last row does not end at the hits";
  std::uint64_t arrivals = 0, back_arrivals = 0;
  for (std::size_t s = 0; s < t.hits_on_surface.size(); ++s) {
    arrivals += t.hits_on_surface[s];
    back_arrivals += t.back_face_hits_on_surface[s];
  }
  if (arrivals != total - escaped || back_arrivals != back) {
    return "its per-surface totals disagree with its rows";
  }
  return "";
}

}  // namespace

std::string TallyCacheKey::hex() const {
  return hex64(fnv) + hex64(mix);
}

TallyCacheKey tally_cache_key(const std::string& mesh_bytes, const MeshOptions& mesh,
                              const Scene& scene, const TallyCacheSettings& settings) {
  Hasher h;
  h.text(kTallyCacheFormat);
  h.bytes(mesh_bytes.data(), mesh_bytes.size());
  h.u64(mesh_bytes.size());
  h.text(to_string(mesh.unit));
  h.u64(mesh.surfaces_from == SurfacesFrom::groups ? 0 : 1);
  h.real(mesh.degenerate_relative_area);
  h.u64(scene.surfaces.size());
  for (std::size_t i = 0; i < scene.surfaces.size(); ++i) {
    const Surface& s = scene.surfaces[i];
    h.text(s.name);
    h.u64(s.two_sided ? 1 : 0);
    const PatchSpec spec = i < settings.patch_specs.size() ? settings.patch_specs[i] : PatchSpec{};
    h.u64(static_cast<std::uint64_t>(spec.mode));
    h.real(spec.size);
  }
  h.u64(settings.panels.size());
  for (const PanelPlacement& p : settings.panels) {
    h.text(p.name);
    h.text(p.host);
    for (const double v : {p.centre.x, p.centre.y, p.centre.z, p.length, p.width}) h.real(v);
    h.u64(p.along ? 1 : 0);
    if (p.along)
      for (const double v : {p.along->x, p.along->y, p.along->z}) h.real(v);
  }
  h.u64(settings.rays.size());
  for (std::uint64_t n : settings.rays) h.u64(n);
  h.u64(settings.seed);
  h.text(sampler_name(settings.sampler));
  h.u64(settings.smoothed ? 1 : 0);
  return h.finish();
}

std::string default_cache_dir() {
  auto env = [](const char* name) -> std::string {
    const char* v = std::getenv(name);
    return v ? v : "";
  };
  if (!env("HEARTHRAY_CACHE").empty()) return env("HEARTHRAY_CACHE");
  if (!env("XDG_CACHE_HOME").empty())
    return (fs::path(env("XDG_CACHE_HOME")) / "hearthray").string();
  if (!env("HOME").empty()) return (fs::path(env("HOME")) / ".cache" / "hearthray").string();
  return "";
}

std::string tally_cache_path(const std::string& dir, const TallyCacheKey& key) {
  return (fs::path(dir) / (key.hex() + ".tallies")).string();
}

CachedTallies load_cached_tallies(const std::string& dir, const TallyCacheKey& key,
                                  const Scene& scene, const PatchSet& patches,
                                  const std::vector<std::uint64_t>& rays) {
  CachedTallies out;
  out.path = tally_cache_path(dir, key);
  std::error_code ec;
  if (!fs::is_regular_file(out.path, ec)) return out;  // missing
  auto reject = [&](const std::string& why) {
    out.status = CacheStatus::rejected;
    out.reason = why;
    out.tallies = Tallies{};
    return out;
  };
  std::string data;
  {
    std::ifstream in(out.path, std::ios::binary);
    std::ostringstream ss;
    ss << in.rdbuf();
    if (!in) return reject("it could not be read");
    data = ss.str();
  }
  if (data.size() < kHeaderBytes) return reject("it is too short to hold a header");
  if (std::memcmp(data.data(), kMagic, sizeof kMagic) != 0) {
    return reject("it is not a hearthray tally file");
  }
  Cursor c{data, sizeof kMagic};
  const std::uint32_t layout = c.u32();
  const bool squares = (c.u32() & 1u) != 0;
  if (layout != kLayoutVersion) {
    return reject("its layout version is " + std::to_string(layout) + ", expected " +
                  std::to_string(kLayoutVersion));
  }
  TallyCacheKey stored;
  stored.fnv = c.u64();
  stored.mix = c.u64();
  if (!(stored == key)) return reject("it was made for another key");
  const std::uint64_t n_patches = c.u64(), n_surfaces = c.u64(), rows = c.u64();
  const std::uint64_t begin = c.u64(), hits = c.u64();
  const std::uint64_t seconds_bits = c.u64();
  TallyCacheKey checksum;
  checksum.fnv = c.u64();
  checksum.mix = c.u64();
  if (n_patches != patches.size() || rows != n_patches || begin != 0 ||
      n_surfaces != scene.surfaces.size()) {
    return reject("it holds " + std::to_string(rows) + " rows of " + std::to_string(n_patches) +
                  " patches on " + std::to_string(n_surfaces) + " surfaces; the scene has " +
                  std::to_string(patches.size()) + " patches on " +
                  std::to_string(scene.surfaces.size()) + " surfaces");
  }
  // Sizes are now bounded by the scene, except `hits`: check it against the file's length
  // before anything is allocated.
  const std::uint64_t fixed =
      kHeaderBytes + rows * 8 * (squares ? 5 : 3) + (rows + 1) * 8 + n_surfaces * 8 * 2;
  const std::uint64_t per_hit = squares ? 20 : 12;
  if (data.size() < fixed || (data.size() - fixed) % per_hit != 0 ||
      (data.size() - fixed) / per_hit != hits) {
    return reject("its length does not match its header (a truncated or damaged file)");
  }
  if (!(payload_hash(data, kHeaderBytes) == checksum)) {
    return reject("its contents do not match their checksum (a damaged file)");
  }
  Tallies& t = out.tallies;
  t.patch_count = n_patches;
  t.emitter_begin = 0;
  t.rays = c.all<std::uint64_t>(rows);
  t.escaped = c.all<std::uint64_t>(rows);
  t.back_face = c.all<std::uint64_t>(rows);
  t.hit_offset = c.all<std::uint64_t>(rows + 1);
  t.hit_patch = c.all<std::uint32_t>(hits);
  t.hit_count = c.all<std::uint64_t>(hits);
  t.back_face_hits_on_surface = c.all<std::uint64_t>(n_surfaces);
  t.hits_on_surface = c.all<std::uint64_t>(n_surfaces);
  if (squares) {
    t.hit_square = c.reals(hits);
    t.escaped_square = c.reals(rows);
    t.back_face_square = c.reals(rows);
  }
  const std::string problem = check_counts(t, rays);
  if (!problem.empty()) return reject(problem);
  std::memcpy(&out.trace_seconds, &seconds_bits, sizeof seconds_bits);
  out.status = CacheStatus::hit;
  return out;
}

CacheWrite store_cached_tallies(const std::string& dir, const TallyCacheKey& key, const Tallies& t,
                                double trace_seconds) {
  CacheWrite out;
  out.path = tally_cache_path(dir, key);
  if (t.emitter_begin != 0 || t.rows() != t.patch_count) {
    out.reason = "only tallies of all emitters are cached";
    return out;
  }
  std::string payload;
  put_all(&payload, t.rays);
  put_all(&payload, t.escaped);
  put_all(&payload, t.back_face);
  put_all(&payload, t.hit_offset);
  put_all(&payload, t.hit_patch);
  put_all(&payload, t.hit_count);
  put_all(&payload, t.back_face_hits_on_surface);
  put_all(&payload, t.hits_on_surface);
  const bool squares = !t.hit_square.empty();
  for (const auto* reals : {&t.hit_square, &t.escaped_square, &t.back_face_square}) {
    for (double x : *reals) {
      std::uint64_t bits;
      std::memcpy(&bits, &x, sizeof bits);
      put_u64(&payload, bits);
    }
  }
  Hasher h;
  h.bytes(payload.data(), payload.size());
  const TallyCacheKey checksum = h.finish();

  std::string data(kMagic, sizeof kMagic);
  put_u32(&data, kLayoutVersion);
  put_u32(&data, squares ? 1u : 0u);
  put_u64(&data, key.fnv);
  put_u64(&data, key.mix);
  put_u64(&data, t.patch_count);
  put_u64(&data, t.hits_on_surface.size());
  put_u64(&data, t.rows());
  put_u64(&data, t.emitter_begin);
  put_u64(&data, t.hit_patch.size());
  std::uint64_t seconds_bits;
  std::memcpy(&seconds_bits, &trace_seconds, sizeof seconds_bits);
  put_u64(&data, seconds_bits);
  put_u64(&data, checksum.fnv);
  put_u64(&data, checksum.mix);
  data += payload;

  std::error_code ec;
  fs::create_directories(dir, ec);
  if (ec) {
    out.reason = "cannot create the cache folder '" + dir + "': " + ec.message();
    return out;
  }
  // A name no other writer uses, so that two solves of one scene at once cannot mix bytes.
  static std::atomic<unsigned> counter{0};
  const std::string temporary =
      out.path + ".tmp." + std::to_string(::getpid()) + "." + std::to_string(counter++);
  {
    std::ofstream file(temporary, std::ios::binary | std::ios::trunc);
    file.write(data.data(), static_cast<std::streamsize>(data.size()));
    if (!file) {
      fs::remove(temporary, ec);
      out.reason = "cannot write '" + temporary + "'";
      return out;
    }
  }
  fs::rename(temporary, out.path, ec);
  if (ec) {
    fs::remove(temporary, ec);
    out.reason = "cannot move the cache file into place at '" + out.path + "'";
    return out;
  }
  out.stored = true;
  return out;
}

}  // namespace hearthray
