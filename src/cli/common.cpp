#include "common.hpp"

#include <unistd.h>

#include <atomic>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <iostream>

#include "commands.hpp"
#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "processes.hpp"

namespace hearthray::cli {

namespace {

std::atomic<bool> progress_shown{false};

// What a long stage after the tracing is doing, for the progress line; null for the stages
// that are quick or followed by output of their own.
const char* long_stage_doing(PipelineStage stage) {
  switch (stage) {
    case PipelineStage::smooth:
      return "smoothing the view factors";
    case PipelineStage::thermal_model:
      return "building the thermal model";
    case PipelineStage::exchange:
      return "solving the exchange";
    default:
      return nullptr;
  }
}

// "\r  tracing  42 %  3.1 Mrays/s  12 s left" on a terminal, then the stage that follows
// ("smoothing the view factors"): at 100k patches each takes seconds.
void show_progress(const PipelineProgress& p) {
  if (p.stage != PipelineStage::trace) {
    end_progress_line();
    if (const char* doing = long_stage_doing(p.stage)) {
      std::fprintf(stderr, "\r  %s ... ", doing);
      std::fflush(stderr);
      progress_shown = true;
    }
    return;
  }
  if (p.total == 0) {  // the stage's start: no rays counted yet
    std::fprintf(stderr, "\r  tracing ... ");
    std::fflush(stderr);
    progress_shown = true;
    return;
  }
  const double fraction = double(p.done) / double(p.total);
  const double rate = p.seconds > 0 ? double(p.done) / p.seconds : 0.0;
  const double left = rate > 0 ? double(p.total - p.done) / rate : 0.0;
  std::fprintf(stderr, "\r  tracing %5.1f %%  %6.2f Mrays/s  %6.0f s left ", 100 * fraction,
               rate / 1e6, std::ceil(left));
  std::fflush(stderr);
  progress_shown = true;
}

// When stderr is not a terminal (a log file, a pipe): a line every kProgressLineSeconds
// (or $HEARTHRAY_PROGRESS_SECONDS) while tracing, so that a long run shows it is alive without
// filling the log.
constexpr double kProgressLineSeconds = 10;
std::atomic<double> progress_line_seconds{kProgressLineSeconds};
std::atomic<double> next_progress_line{kProgressLineSeconds};

// The interval of the progress lines: $HEARTHRAY_PROGRESS_SECONDS when set, else the default.
double progress_interval() {
  const char* text = std::getenv("HEARTHRAY_PROGRESS_SECONDS");
  if (!text || !*text) return kProgressLineSeconds;
  char* end = nullptr;
  const double seconds = std::strtod(text, &end);
  if (*end || !(seconds > 0) || !std::isfinite(seconds))
    throw InputError(std::string("HEARTHRAY_PROGRESS_SECONDS = '") + text +
                     "': give the seconds between progress lines, a number above 0");
  return seconds;
}

// Set once a tracing line is logged: the run is long enough that the stages after the
// tracing get a line each too (a short run's log stays as it was); a stage started again
// (the exchange, solved at each step of a goal seek) is not logged again.
std::atomic<bool> progress_logged{false};
std::atomic<int> last_stage_logged{-1};

void log_progress(const PipelineProgress& p) {
  if (p.stage != PipelineStage::trace) {
    next_progress_line = progress_line_seconds.load();
    const char* doing = long_stage_doing(p.stage);
    if (doing && progress_logged && last_stage_logged.exchange(int(p.stage)) != int(p.stage)) {
      std::fprintf(stderr, "progress: %s\n", doing);
      std::fflush(stderr);
    }
    return;
  }
  if (p.seconds < next_progress_line || p.done >= p.total) return;
  next_progress_line = p.seconds + progress_line_seconds;
  progress_logged = true;
  const double fraction = p.total ? double(p.done) / double(p.total) : 1.0;
  const double rate = p.seconds > 0 ? double(p.done) / p.seconds : 0.0;
  const double left = rate > 0 ? double(p.total - p.done) / rate : 0.0;
  std::fprintf(stderr, "progress: tracing %.1f %% of %s rays, %.3g Mrays/s, about %.0f s left\n",
               100 * fraction, std::to_string(p.total).c_str(), rate / 1e6, std::ceil(left));
  std::fflush(stderr);
}

// The refused scene's error, then the ray warnings that may explain it (flipped normals, a
// leak).
int refuse(const RefusedInput& e) {
  std::cerr << "error: " << e.what() << "\n";
  print_warnings(e.ray_warnings());
  return 2;
}

}  // namespace

SceneFile open_scene_with_unit(const std::string& input, const std::string& unit) {
  SceneFile file = open_scene(input);
  if (unit.empty()) return file;
  if (!file.path.empty()) {
    throw InputError("--unit is for a bare mesh: " + input +
                     " is a scene file, which gives the mesh's unit in [mesh] as unit = \"" + unit +
                     "\"");
  }
  try {
    file.mesh.unit = parse_length_unit(unit);
  } catch (const InputError& e) {
    throw InputError(std::string("--unit: ") + e.what());
  }
  return file;
}

PipelineOptions pipeline_options(const RaySettings& settings, const CacheChoice* cache) {
  PipelineOptions options;
  options.rays_per_patch = settings.rays;
  options.seed = settings.seed;
  if (settings.sampler)
    options.sampler =
        *settings.sampler == "sobol" ? EmissionSampler::sobol : EmissionSampler::stratified;
  if (settings.target_error) {
    const TargetError target = parse_target_error(*settings.target_error, "--target-error");
    options.target_error = target.value;
    options.target_on_heat_flows = target.heat_flows;
  }
  options.max_rays_per_patch = settings.max_rays;
  if (settings.time_limit)
    options.time_limit_s = parse_time_limit(*settings.time_limit, "--time-limit");
  options.threads = settings.threads;
  options.smooth = !settings.raw;
  if (cache) {
    options.use_cache = cache->use;
    options.cache_dir = cache->dir;
  }
  options.force = settings.force;
  if (!settings.quiet && isatty(fileno(stderr))) {
    options.progress = show_progress;
  } else if (!settings.quiet) {
    progress_line_seconds = progress_interval();
    next_progress_line = progress_line_seconds.load();
    options.progress = log_progress;
  }
  if (command_splits()) prepare_split(&options);
  return options;
}

FactorRun quick_view_factors(const Scene& scene, std::uint64_t rays, std::uint64_t seed,
                             int threads, bool force) {
  PipelineOptions options;
  options.force = force;
  options.rays_per_patch = rays;
  options.seed = seed;
  options.threads = threads;
  options.smooth = false;
  return run_view_factors(scene, options);
}

void end_progress_line() {
  if (progress_shown.exchange(false)) std::fprintf(stderr, "\r%60s\r", "");
}

std::string cache_log_line(const FactorRun& run) {
  const std::string traced = "view factors: traced " + std::to_string(run.stats.rays) +
                             " rays in " + rounded("%.3g", run.stats.seconds) + " s";
  switch (run.cache) {
    case CacheOutcome::hit:
      return "view factors: from cache " + run.cache_path;
    case CacheOutcome::stored:
      return traced + "; stored in cache " + run.cache_path;
    case CacheOutcome::not_stored:
      return traced;
    case CacheOutcome::not_used:
    case CacheOutcome::no_folder:
      break;
  }
  return traced + " (cache not used)";
}

void print_no_cache_folder(const FactorRun& run) {
  if (run.cache != CacheOutcome::no_folder) return;
  std::cerr << "warning: no cache folder: set HEARTHRAY_CACHE (or HOME) or give --cache DIR; "
               "view factors are traced every time\n";
}

namespace {

std::string rays_list(const std::vector<std::uint64_t>& rays) {
  std::vector<std::string> items;
  for (std::uint64_t n : rays) items.push_back(std::to_string(n));
  return join(items);
}

std::string target_errors(const RayTarget& t) {
  if (!t.heat_flows)
    return "largest standard error " + rounded("%.3g", t.achieved) + " (wanted " +
           rounded("%.3g", t.error) + ")";
  if (!t.heat.judged) return "heat-flow errors unknown";
  return "largest standard error of a heat flow " + rounded("%.2g %%", 100 * t.achieved) + " ('" +
         t.heat.surfaces[t.heat.worst] + "'; wanted " + rounded("%.2g %%", 100 * t.error) + ")";
}

}  // namespace

std::string target_line(const FactorRun& run) {
  const RayTarget& t = run.target;
  if (!t.used) return "";
  const std::string errors = target_errors(t);
  std::string line = t.reached() ? "ray target: reached, " + errors + " with " +
                                       std::to_string(t.round_rays.back()) + " rays per patch"
                                 : "ray target NOT reached: " + errors + " with " +
                                       std::to_string(t.round_rays.back()) +
                                       " rays per patch, stopped by the " + to_string(t.stop);
  if (!t.reached() && t.stop == TargetStop::ray_cap)
    line += " of " + std::to_string(t.max_rays_per_patch) + " rays per patch";
  if (!t.reached() && t.stop == TargetStop::time_limit)
    line += " of " + rounded("%.3g", t.time_limit_s) + " s (the next round would pass it)";
  return line + "; rounds of " + rays_list(t.round_rays) + " rays per patch, " +
         std::to_string(t.rays_all_rounds) + " rays in all";
}

int target_status(const FactorRun& run, const std::string& scene) {
  if (!run.target.used || run.target.reached()) return 0;
  std::cerr << "warning: " << (scene.empty() ? "" : scene + ": ") << target_line(run)
            << "; the results are those of the last round, with the errors reported\n";
  return kExitTargetNotReached;
}

FactorReportInfo report_info(const SceneFile& file, const FactorRun& run) {
  FactorReportInfo info;
  info.scene = file.path.empty() ? file.mesh_path : file.path;
  info.seed = run.seed;
  info.sampler = sampler_name(run.sampler);
  info.rays_per_patch = run.rays_per_patch;
  info.trace_seconds = run.stats.seconds;
  info.rays_per_second = run.stats.rays_per_second;
  info.threads = run.stats.threads;
  if (run.factors.smoothed) {
    info.smoothing = "constrained maximum likelihood (Daun, Morton & Howell 2005)";
    info.smoothing_iterations = run.smoothing.iterations;
    info.max_row_error = run.smoothing.max_row_error;
    info.max_reciprocity_error = run.smoothing.max_reciprocity_error;
  } else {
    info.smoothing = "none (raw)";
  }
  info.warnings = warning_texts(run.diagnostics.warnings);
  const RayTarget& t = run.target;
  info.target.used = t.used;
  info.target.error_wanted = t.error;
  info.target.error_achieved = t.achieved;
  info.target.reached = t.reached();
  info.target.stopped_by = to_string(t.stop);
  info.target.round_rays_per_patch = t.round_rays;
  info.target.round_errors = t.round_errors;
  info.target.max_rays_per_patch = t.max_rays_per_patch;
  info.target.time_limit_s = t.time_limit_s;
  info.target.rays_all_rounds = t.rays_all_rounds;
  info.target.heat_flows = t.heat_flows;
  if (t.heat_flows && t.heat.judged) {
    info.target.heat_samples = t.heat.samples;
    info.target.heat_floor_W = t.heat.floor_W;
    info.target.surfaces = t.heat.surfaces;
    info.target.net_W = t.heat.net_W;
    info.target.net_error_W = t.heat.net_error_W;
    info.target.temperature_error_K = t.heat.temperature_error_K;
  }
  return info;
}

std::vector<std::string> warning_texts(const std::vector<Warning>& warnings) {
  std::vector<std::string> texts;
  for (const Warning& w : warnings) texts.push_back(w.text);
  return texts;
}

void print_warnings(const std::vector<Warning>& warnings, const std::string& label) {
  const std::string prefix = label.empty() ? "" : label + ": ";
  for (const Warning& w : warnings) std::cerr << "warning: " << prefix << w.text << "\n";
}

void print_notes(const std::vector<std::string>& notes, const std::string& label) {
  const std::string prefix = label.empty() ? "" : label + ": ";
  for (const std::string& n : notes) std::cerr << "note: " << prefix << n << "\n";
}

std::string smoothing_line(const FactorRun& run) {
  char buffer[256];
  if (!run.factors.smoothed) return "reciprocity and closure: not enforced (--raw)";
  std::snprintf(buffer, sizeof buffer,
                "reciprocity and closure: constrained maximum likelihood (Daun, Morton & "
                "Howell 2005), %d iterations%s; largest correction %.2f standard errors",
                run.smoothing.iterations, run.smoothing.converged ? "" : " (NOT converged)",
                run.factors.max_correction_sigma);
  return buffer;
}

std::ofstream open_output(const std::filesystem::path& path) {
  std::ofstream out(path, std::ios::binary | std::ios::trunc);
  if (!out) throw InputError("cannot write '" + path.string() + "'");
  return out;
}

int solve_scene_printing(const std::string& input, const RaySettings& settings,
                         const CacheChoice& cache, bool comfort, SolvedScene* out, bool exchange,
                         const std::function<void(const SolvedScene&)>& before_exchange) {
  const PipelineOptions options = pipeline_options(settings, &cache);
  SceneFile file = open_scene(input);
  Scene scene = load_scene(file);
  if (comfort) check_comfort_input(file, scene);
  try {
    *out = model_scene(std::move(file), std::move(scene), options);
    end_progress_line();
    print_warnings(out->warnings, settings.scene_label);
    print_no_cache_folder(out->run);
    if (!settings.quiet) print_notes(out->notes, settings.scene_label);
    if (before_exchange) before_exchange(*out);
    if (exchange) solve_model_exchange(out, options);
    end_progress_line();
  } catch (const RefusedInput& e) {
    end_progress_line();
    return refuse(e);
  }
  return 0;
}

}  // namespace hearthray::cli
