// Gas cache: the raw Monte Carlo scores of a gas run's exchange areas (GasScores) kept on disk
// beside the view-factor tallies (same folder, same 128-bit keys, same atomic write), so that
// a second solve with other temperatures, emissivities, firing or flow skips the tracing. The
// zones, exchange areas and smoothing are redone from the scores on every load, so a cached run
// gives exactly the results of a traced one.
//
// A cache file is DIR/<key hex>.gas: a header (magic, layout version, key, sizes, payload hash)
// and the scores. Everything is checked on read; a file that is short, corrupt, of another
// layout or key, or whose scores do not fit the run, is reported as rejected and never trusted.
#pragma once

#include <array>
#include <cstdint>
#include <string>
#include <vector>

#include "hearthray/cache.hpp"
#include "hearthray/gas_zones.hpp"

namespace hearthray {

// Part of every key. Change it whenever the gas tracing or its sampling changes what (mesh,
// patches, grid, absorption coefficients, rays, seed) produce, or when the layout changes.
inline constexpr const char* kGasCacheFormat = "hearthray-gas-scores/1";

// What the scores depend on besides the mesh.
struct GasCacheSettings {
  std::vector<PatchSpec> patch_specs;  // per surface: how it is cut into patches
  std::vector<std::uint64_t> rays;     // rays of each patch
  std::uint64_t rays_per_cell = 0;
  std::array<int, 3> cells{1, 1, 1};
  std::vector<double> k;  // absorption coefficient of each gray gas, 1/m
  std::uint64_t seed = 0;
  // The surface rays' sampler (the gas tracing draws stratified rays).
  EmissionSampler sampler = EmissionSampler::stratified;
  // Panels cut out of the mesh's surfaces by the scene file ([panel.NAME]).
  std::vector<PanelPlacement> panels;
};

// Hashes kGasCacheFormat, the mesh file's bytes and options, the placed panels, the surfaces (name,
// two-sided, patch spec), the rays of every patch, zone rays, grid, absorption coefficients (their
// bits), seed and sampler.
TallyCacheKey gas_cache_key(const std::string& mesh_bytes, const MeshOptions& mesh,
                            const Scene& scene, const GasCacheSettings& settings);

// DIR/<key hex>.gas
std::string gas_cache_path(const std::string& dir, const TallyCacheKey& key);

struct CachedGasScores {
  CacheStatus status = CacheStatus::missing;
  std::string path;
  std::string reason;  // why a file was rejected
  GasScores scores;    // on a hit
};

// Reads DIR/<key>.gas and checks it against the key and the run it should describe: `rays`
// per row (patches, then the cells of the grid), `gases` gray gases.
CachedGasScores load_cached_gas_scores(const std::string& dir, const TallyCacheKey& key,
                                       const std::vector<std::uint64_t>& rays, std::size_t cells,
                                       std::size_t gases);

// Writes the scores atomically (temporary file, then rename); failure is reported, not thrown.
CacheWrite store_cached_gas_scores(const std::string& dir, const TallyCacheKey& key,
                                   const GasScores& scores);

}  // namespace hearthray
