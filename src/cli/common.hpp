// Shared pieces of the command-line tool: pipeline options from the command line, a progress
// line, and printing warnings and notes. The tool only parses arguments, calls the library's
// pipeline (hearthray/pipeline.hpp) and writes outputs.
#pragma once

#include <cstdint>
#include <filesystem>
#include <fstream>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "hearthray/io.hpp"
#include "hearthray/pipeline.hpp"

namespace hearthray::cli {

struct RaySettings {
  std::optional<std::uint64_t> rays;  // command line over scene file over default
  std::optional<std::uint64_t> seed;
  std::optional<std::string> sampler;       // "sobol" or "stratified" (checked by CLI11)
  std::optional<std::string> target_error;  // --target-error (parse_target_error)
  std::optional<std::uint64_t> max_rays;    // --max-rays: cap per patch of the rounds
  std::optional<std::string> time_limit;    // --time-limit "10 min" (parse_time_limit)
  int threads = 0;
  bool raw = false;    // skip smoothing
  bool quiet = false;  // no progress line, no summary
  bool force = false;  // run even when the estimated size is past the limits
  // Not an option: set by commands that solve several scenes (compare, size), so that each
  // scene's warnings and notes say which scene they are about ("layout-a: ...").
  std::string scene_label;
};

struct CacheChoice {
  bool use = true;
  std::string dir;  // "" = default_cache_dir()
};

// A scene file or a bare mesh; `unit` (from --unit, "" when not given) is the unit of a bare
// mesh's coordinates. A scene file gives its unit in [mesh]: --unit with one is an error.
SceneFile open_scene_with_unit(const std::string& input, const std::string& unit);

// Pipeline options from the command line; the cache only when `cache` is given and used.
// Unless quiet, a progress line on a terminal while tracing.
PipelineOptions pipeline_options(const RaySettings& settings, const CacheChoice* cache = nullptr);

// A quick raw estimate on whole surfaces (`check`, `render --field view-factor-to=`): no
// smoothing, no cache, no progress line.
FactorRun quick_view_factors(const Scene& scene, std::uint64_t rays, std::uint64_t seed,
                             int threads, bool force);

// Clears the progress line if one is shown (call after a pipeline call).
void end_progress_line();

// What happened to the view factors, e.g. "view factors: from cache PATH".
std::string cache_log_line(const FactorRun& run);

// To stderr, when the cache was asked for but no folder is known: a warning saying how to set one.
void print_no_cache_folder(const FactorRun& run);

// With a target error: one line saying whether it was reached, the error achieved and the
// rays used, e.g. "ray target: reached, largest standard error 0.00087 (wanted 0.001) with
// 65536 rays per patch; rounds of 8192, 65536 rays per patch". "" without a target.
std::string target_line(const FactorRun& run);
// After a run with a target that was not reached: a warning on stderr (always, even quiet),
// naming `scene` when given (commands of several scenes). Returns the exit status for it:
// kExitTargetNotReached, or 0.
int target_status(const FactorRun& run, const std::string& scene = "");
// The worst of target_status over several runs (each warned about): 5 when any missed.
template <typename Runs, typename Get>
int targets_status(const Runs& runs, const std::vector<std::string>& scenes, Get run_of) {
  int status = 0;
  for (std::size_t k = 0; k < scenes.size(); ++k)
    if (const int s = target_status(run_of(runs[k]), scenes[k])) status = s;
  return status;
}

// The report fields for the JSON output.
FactorReportInfo report_info(const SceneFile& file, const FactorRun& run);

// The texts of warnings.
std::vector<std::string> warning_texts(const std::vector<Warning>& warnings);

// To stderr: "warning: ..." per warning, then (when `notes`) "note: ..." per note.
// "warning: ..." and "note: ..." lines on stderr, each after `label: ` when a label is given.
void print_warnings(const std::vector<Warning>& warnings, const std::string& label = "");
void print_notes(const std::vector<std::string>& notes, const std::string& label = "");

// One line about the smoothing, e.g. for the terminal.
std::string smoothing_line(const FactorRun& run);

// Opens `path` for writing or throws InputError naming it.
std::ofstream open_output(const std::filesystem::path& path);

// A scene solved as `solve` does it (hearthray::solve_scene), printing its warnings (and,
// unless quiet, its notes) to stderr. Returns 0, or 2 after printing `error: ...` and the ray
// warnings when the thermal model or the exchange refuses the input. `comfort`: the [comfort]
// table is checked before anything is traced. The result may be unconverged: check its status.
// `exchange` false: the thermal model only (no steady solve). `before_exchange`, if given, is
// called with the built model before the exchange solve (e.g. to start writing what depends
// only on the view factors while the solve runs); `*out` stays where it is.
int solve_scene_printing(const std::string& input, const RaySettings& settings,
                         const CacheChoice& cache, bool comfort, SolvedScene* out,
                         bool exchange = true,
                         const std::function<void(const SolvedScene&)>& before_exchange = {});

}  // namespace hearthray::cli
