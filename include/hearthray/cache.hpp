// View-factor cache: the ray tallies of a scene kept on disk under a key that hashes everything
// they depend on, so that a second solve with other temperatures or emissivities skips the ray
// tracing, and a changed mesh or ray setting is never served stale (its key differs). Tallies,
// not smoothed factors, are kept: smoothing is cheap and is redone from them on every load, so
// a cached run gives exactly the factors of a traced one.
//
// A cache file is DIR/<key hex>.tallies: a header (magic, layout version, key, sizes, payload
// hash) and the tallies. Everything is checked on read; a file that is short, corrupt, of
// another layout or another key, or whose tallies do not fit the scene, is reported as rejected
// and never trusted.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "hearthray/panels.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/view_factors.hpp"

namespace hearthray {

// Part of every key. Change it whenever tracing or sampling changes what (mesh, rays, seed)
// produce, or when the file layout changes: old files then simply stop matching.
inline constexpr const char* kTallyCacheFormat = "hearthray-tallies/7";

// 128 bits from two unrelated 64-bit hashes of the same bytes (FNV-1a and a word-wise
// multiply-xorshift mix), so an accidental collision needs both to collide at once.
struct TallyCacheKey {
  std::uint64_t fnv = 0;
  std::uint64_t mix = 0;

  std::string hex() const;  // 32 hexadecimal digits
  bool operator==(const TallyCacheKey& other) const { return fnv == other.fnv && mix == other.mix; }
};

// What the tallies depend on besides the mesh.
struct TallyCacheSettings {
  std::vector<PatchSpec> patch_specs;  // per surface: how it is cut into patches
  std::vector<std::uint64_t> rays;     // rays of each patch
  std::uint64_t seed = 0;
  EmissionSampler sampler = kDefaultSampler;
  bool smoothed = true;  // the factors are smoothed after loading
  // Panels cut out of the mesh's surfaces by the scene file: they change the geometry that the
  // mesh file's bytes alone describe.
  std::vector<PanelPlacement> panels;
};

// Hashes the mesh file's bytes (`mesh_bytes`, as read from the file the scene was loaded
// from), the mesh options it was loaded with (unit, surfaces_from, the degenerate-triangle
// threshold), the panels placed on it (`settings.panels`), the number of surfaces and the
// two-sided flag and patch spec of each, the rays of every patch, seed, smoothing and
// kTallyCacheFormat.
TallyCacheKey tally_cache_key(const std::string& mesh_bytes, const MeshOptions& mesh,
                              const Scene& scene, const TallyCacheSettings& settings);

// The bytes of the mesh file at `path`, for a cache key. Throws InputError when unreadable.
std::string read_mesh_bytes(const std::string& path);

// $HEARTHRAY_CACHE, else $XDG_CACHE_HOME/hearthray, else $HOME/.cache/hearthray; "" when none of
// these variables is set.
std::string default_cache_dir();

// DIR/<key hex>.tallies
std::string tally_cache_path(const std::string& dir, const TallyCacheKey& key);

enum class CacheStatus { hit, missing, rejected };

struct CachedTallies {
  CacheStatus status = CacheStatus::missing;
  std::string path;
  std::string reason;        // why a file was rejected (empty on a hit or when missing)
  Tallies tallies;           // on a hit
  double trace_seconds = 0;  // how long the original tracing took
};

// Reads DIR/<key>.tallies and checks it against the key and against the scene it should
// describe: one full row per patch, `rays[p]` rays for patch p, every ray accounted for.
CachedTallies load_cached_tallies(const std::string& dir, const TallyCacheKey& key,
                                  const Scene& scene, const PatchSet& patches,
                                  const std::vector<std::uint64_t>& rays);

struct CacheWrite {
  bool stored = false;
  std::string path;
  std::string reason;  // why it could not be written
};

// Writes the tallies (all emitters) atomically: a temporary file renamed into place, so a
// reader never sees half a file. Creates DIR when needed. Failure is reported, not thrown: a
// cache that cannot be written only costs time.
CacheWrite store_cached_tallies(const std::string& dir, const TallyCacheKey& key,
                                const Tallies& tallies, double trace_seconds);

}  // namespace hearthray
