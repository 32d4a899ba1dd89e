// Shared pieces of the command-line tool: running the view-factor stages with a progress
// line (or taking their tallies from the cache), and printing warnings. The tool only parses
// arguments, calls library stages and writes outputs.
#pragma once

#include <cstdint>
#include <filesystem>
#include <fstream>
#include <optional>
#include <string>
#include <vector>

#include "hearthray/diagnostics.hpp"
#include "hearthray/exchange.hpp"
#include "hearthray/io.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/scene_file.hpp"
#include "hearthray/smoothing.hpp"
#include "hearthray/thermal_model.hpp"
#include "hearthray/view_factors.hpp"

namespace hearthray::cli {

inline constexpr std::uint64_t kDefaultSeed = 1;
inline constexpr const char* kToolVersion = "0.1.0";

struct RaySettings {
  std::optional<std::uint64_t> rays;  // command line over scene file over default
  std::optional<std::uint64_t> seed;
  int threads = 0;
  bool raw = false;    // skip smoothing
  bool quiet = false;  // no progress line, no summary
};

struct FactorRun {
  Scene scene;  // as traced: surfaces cut into patches where asked
  PatchSet patches;
  std::vector<PatchSpec> specs;     // per surface
  std::vector<std::uint64_t> rays;  // per patch
  Tallies tallies;
  ViewFactors factors;
  TraceStats stats;
  SmoothingSummary smoothing;
  RayDiagnostics diagnostics;
  std::uint64_t rays_per_patch = 0;  // when every patch has the same rays, else 0
  std::uint64_t seed = 0;
  bool from_cache = false;  // tallies read from the cache: no ray was traced
  std::string cache_path;   // the cache file read or written ("" when none)
};

// Seed: command line over scene file over default.
std::uint64_t ray_seed(const SceneFile& file, const RaySettings& settings);

// Traces, diagnoses and (unless raw) smooths.
FactorRun run_view_factors(const SceneFile& file, const Scene& scene, const RaySettings& settings);

struct CacheChoice {
  bool use = true;
  std::string dir;  // "" = default_cache_dir()
};

// Tallies from the cache when a valid file has the key of (mesh bytes, mesh settings, sides,
// rays, seed), else traced and stored. Appends what happened to `log` ("view factors: from
// cache ...") and problems with the cache (a rejected file, a folder that cannot be written)
// to `warnings`.
FactorRun cached_view_factors(const SceneFile& file, const Scene& scene,
                              const RaySettings& settings, const CacheChoice& cache,
                              std::vector<std::string>* log, std::vector<std::string>* warnings);

// The report fields for the JSON output.
FactorReportInfo report_info(const SceneFile& file, const FactorRun& run);

// Warnings and scene warnings to stderr, prefixed "warning: ".
void print_warnings(const Scene& scene, const RayDiagnostics& diagnostics, bool notes);

// One line about the smoothing, e.g. for the terminal.
std::string smoothing_line(const FactorRun& run);

// Creates the output folder (and its parents) or throws InputError naming it.
std::filesystem::path make_output_dir(const std::string& dir);
// Opens `path` for writing or throws InputError naming it.
std::ofstream open_output(const std::filesystem::path& path);

// A scene solved as `solve` does it: scene file -> view factors (cache) -> thermal model ->
// exchange. The model points into itself (its problem into its factors): keep it in place.
struct SolvedScene {
  SceneFile file;
  Scene scene;
  FactorRun run;
  ThermalModel model;
  ExchangeResult result;
  std::vector<std::string> log;       // what happened to the view factors
  std::vector<std::string> warnings;  // scene and ray warnings (a folded leak left out)
};

// Runs the stages and prints warnings (and, unless quiet, notes) to stderr. Returns 0, or 2
// after printing `error: ...` when the thermal model or the exchange refuses the input.
// Throws InputError for other bad input. The result may be unconverged: check its status.
int solve_scene(const std::string& input, const RaySettings& settings, const CacheChoice& cache,
                SolvedScene* out);

}  // namespace hearthray::cli
