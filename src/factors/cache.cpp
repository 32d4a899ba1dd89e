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

#include "factors/cache_io.hpp"
#include "hearthray/error.hpp"
#include "hearthray/hash.hpp"

namespace hearthray {
namespace {

namespace fs = std::filesystem;
using namespace cache_io;

constexpr char kMagic[8] = {'h', 'r', 't', 'a', 'l', 'l', 'y', '\0'};
constexpr std::uint32_t kLayoutVersion = 2;
// magic, layout version + flags (1: the sobol sampler's replicate squares follow the hit
// counts), key (2), patches, surfaces, rows, emitter_begin, hits, trace seconds, payload
// hash (2).
constexpr std::size_t kHeaderBytes = 8 + 8 + 16 + 5 * 8 + 8 + 16;

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
  hash_mesh(h, mesh_bytes, mesh, scene, settings.patch_specs, settings.panels);
  h.u64(settings.rays.size());
  for (std::uint64_t n : settings.rays) h.u64(n);
  h.u64(settings.seed);
  h.text(sampler_name(settings.sampler));
  h.u64(settings.smoothed ? 1 : 0);
  return h.finish();
}

std::string read_mesh_bytes(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError("cannot read the mesh file '" + path + "' to hash it");
  std::string bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  if (in.bad()) throw InputError("error reading the mesh file '" + path + "'");
  return bytes;
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
  std::uint32_t flags = 0;
  const std::string head = read_cache_file(out.path, kMagic, kLayoutVersion, key, kHeaderBytes,
                                           "hearthray tally file", &data, &flags);
  if (!head.empty()) return reject(head);
  Cursor c{data, kHeadBytes};
  const bool squares = (flags & 1u) != 0;
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
  const std::string body = check_cache_body(data, fixed, per_hit, hits, kHeaderBytes, checksum);
  if (!body.empty()) return reject(body);
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

  out = write_cache_file(dir, out.path, data);
  return out;
}

}  // namespace hearthray
