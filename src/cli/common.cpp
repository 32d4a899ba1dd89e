#include "common.hpp"

#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <iostream>

#include "hearthray/cache.hpp"
#include "hearthray/error.hpp"

namespace hearthray::cli {

namespace {

// "\r  tracing  42 %  3.1 Mrays/s  12 s left" on a terminal; nothing otherwise.
void show_progress(const TraceProgress& p) {
  const double fraction = p.rays_total ? double(p.rays_done) / double(p.rays_total) : 1.0;
  const double rate = p.seconds > 0 ? double(p.rays_done) / p.seconds : 0.0;
  const double left = rate > 0 ? double(p.rays_total - p.rays_done) / rate : 0.0;
  std::fprintf(stderr, "\r  tracing %5.1f %%  %6.2f Mrays/s  %6.0f s left ", 100 * fraction,
               rate / 1e6, std::ceil(left));
  std::fflush(stderr);
}

std::string seconds_text(double seconds) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.3g", seconds);
  return buffer;
}

// The traced scene, its patches and rays, as the file and the command line say.
FactorRun start(const SceneFile& file, const Scene& scene, const RaySettings& settings) {
  FactorRun run;
  Discretised d = discretise(file, scene, settings.rays);
  run.scene = std::move(d.scene);
  run.patches = std::move(d.patches);
  run.specs = std::move(d.specs);
  run.rays = std::move(d.rays);
  const bool uniform = std::all_of(run.rays.begin(), run.rays.end(),
                                   [&](std::uint64_t n) { return n == run.rays.front(); });
  run.rays_per_patch = uniform && !run.rays.empty() ? run.rays.front() : 0;
  run.seed = ray_seed(file, settings);
  return run;
}

// Diagnoses and (unless raw) smooths the run's tallies.
void finish(const RaySettings& settings, FactorRun* run) {
  const Scene& scene = run->scene;
  run->diagnostics = diagnose_rays(scene, run->patches, run->tallies, analyse_topology(scene));
  if (settings.raw) {
    run->factors = raw_view_factors(run->patches, run->tallies);
  } else {
    run->factors =
        smooth_view_factors(run->patches, run->tallies, SmoothingOptions{}, &run->smoothing);
  }
}

// Traces the planned run and finishes it.
FactorRun trace_run(FactorRun run, const RaySettings& settings) {
  ViewFactorOptions options;
  options.rays_for_patch = run.rays;
  options.seed = run.seed;
  options.threads = settings.threads;
  const bool show = !settings.quiet && isatty(fileno(stderr));
  if (show) options.progress = show_progress;

  const Tracer tracer(run.scene, options.tracer);
  run.tallies = trace_tallies(run.scene, run.patches, tracer, options, &run.stats);
  if (show) std::fprintf(stderr, "\r%60s\r", "");
  finish(settings, &run);
  return run;
}

}  // namespace

std::uint64_t ray_seed(const SceneFile& file, const RaySettings& settings) {
  return settings.seed.value_or(file.seed.value_or(kDefaultSeed));
}

FactorRun run_view_factors(const SceneFile& file, const Scene& scene, const RaySettings& settings) {
  return trace_run(start(file, scene, settings), settings);
}

FactorRun cached_view_factors(const SceneFile& file, const Scene& scene,
                              const RaySettings& settings, const CacheChoice& cache,
                              std::vector<std::string>* log, std::vector<std::string>* warnings) {
  const std::string dir = cache.use ? (cache.dir.empty() ? default_cache_dir() : cache.dir) : "";
  if (dir.empty()) {
    if (cache.use) {
      warnings->push_back(
          "no cache folder: set HEARTHRAY_CACHE (or HOME) or give --cache DIR; "
          "view factors are traced every time");
    }
    FactorRun run = run_view_factors(file, scene, settings);
    log->push_back("view factors: traced " + std::to_string(run.stats.rays) + " rays in " +
                   seconds_text(run.stats.seconds) + " s (cache not used)");
    return run;
  }
  // Patches and rays are worked out once: the key needs them, and so does the run.
  FactorRun plan = start(file, scene, settings);
  TallyCacheSettings key_settings;
  key_settings.patch_specs = plan.specs;
  key_settings.rays = plan.rays;
  key_settings.seed = plan.seed;
  key_settings.smoothed = !settings.raw;
  const TallyCacheKey key = tally_cache_key(file, scene, key_settings);
  CachedTallies cached = load_cached_tallies(dir, key, plan.scene, plan.patches, plan.rays);
  if (cached.status == CacheStatus::hit) {
    FactorRun run = std::move(plan);
    run.tallies = std::move(cached.tallies);
    for (std::uint64_t n : run.tallies.rays) run.stats.rays += n;
    finish(settings, &run);
    run.from_cache = true;
    run.cache_path = cached.path;
    log->push_back("view factors: from cache " + cached.path);
    return run;
  }
  if (cached.status == CacheStatus::rejected) {
    warnings->push_back("ignored the cache file " + cached.path + ": " + cached.reason +
                        "; tracing again");
  }
  FactorRun run = trace_run(std::move(plan), settings);
  const std::string seconds = seconds_text(run.stats.seconds);
  const CacheWrite written = store_cached_tallies(dir, key, run.tallies, run.stats.seconds);
  if (written.stored) {
    run.cache_path = written.path;
    log->push_back("view factors: traced " + std::to_string(run.stats.rays) + " rays in " +
                   seconds + " s; stored in cache " + written.path);
  } else {
    warnings->push_back("could not store the view factors in the cache: " + written.reason);
    log->push_back("view factors: traced " + std::to_string(run.stats.rays) + " rays in " +
                   seconds + " s");
  }
  return run;
}

FactorReportInfo report_info(const SceneFile& file, const FactorRun& run) {
  FactorReportInfo info;
  info.scene = file.path.empty() ? file.mesh_path : file.path;
  info.seed = run.seed;
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
  info.warnings = run.diagnostics.warnings;
  return info;
}

void print_warnings(const Scene& scene, const RayDiagnostics& diagnostics, bool notes) {
  for (const auto& w : scene.warnings) std::cerr << "warning: " << w << "\n";
  for (const auto& w : diagnostics.warnings) std::cerr << "warning: " << w << "\n";
  if (notes)
    for (const auto& n : diagnostics.notes) std::cerr << "note: " << n << "\n";
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

std::filesystem::path make_output_dir(const std::string& dir) {
  const std::filesystem::path path(dir);
  std::error_code ec;
  std::filesystem::create_directories(path, ec);
  if (ec || !std::filesystem::is_directory(path)) {
    throw InputError("cannot create the output folder '" + path.string() + "'" +
                     (ec ? ": " + ec.message() : std::string()));
  }
  return path;
}

std::ofstream open_output(const std::filesystem::path& path) {
  std::ofstream out(path, std::ios::binary | std::ios::trunc);
  if (!out) throw InputError("cannot write '" + path.string() + "'");
  return out;
}

int solve_scene(const std::string& input, const RaySettings& settings, const CacheChoice& cache,
                SolvedScene* out) {
  SolvedScene& s = *out;
  s.file = open_scene(input);
  s.scene = load_scene(s.file);
  // Thermal input checked before any ray is traced: a typo costs no tracing time.
  check_thermal_input(s.file, s.scene);
  std::vector<std::string> cache_warnings;
  s.run = cached_view_factors(s.file, s.scene, settings, cache, &s.log, &cache_warnings);
  s.run.tallies = Tallies{};  // smoothed and cached: the counts are no longer needed
  // A refused model shows its error first, then the ray warnings that may explain it (flipped
  // normals, a leak).
  auto refuse = [&](const InputError& e) {
    std::cerr << "error: " << e.what() << "\n";
    for (const std::string& w : s.run.diagnostics.warnings) std::cerr << "warning: " << w << "\n";
    return 2;
  };
  try {
    // The matrix moves into the model (at 100k patches it is gigabytes); the run keeps what
    // the reports read of it.
    ViewFactors& factors = s.run.factors;
    const bool smoothed = factors.smoothed;
    const double correction = factors.max_correction_sigma;
    s.model = build_thermal_model(s.file, s.run.scene, s.run.patches, std::move(factors));
    factors = ViewFactors{};
    factors.smoothed = smoothed;
    factors.max_correction_sigma = correction;
  } catch (const InputError& e) {
    return refuse(e);
  }
  // A leak folded back into a closed enclosure is reported by the model's note, not as
  // radiation to surroundings.
  s.warnings = s.scene.warnings;
  for (const std::string& w : s.run.diagnostics.warnings) {
    if (!(s.model.leaks_folded && w.rfind("leak:", 0) == 0)) s.warnings.push_back(w);
  }
  for (const std::string& w : s.warnings) std::cerr << "warning: " << w << "\n";
  for (const std::string& w : cache_warnings) std::cerr << "warning: " << w << "\n";
  if (!settings.quiet) {
    for (const std::string& n : s.run.diagnostics.notes) std::cerr << "note: " << n << "\n";
    for (const std::string& n : s.model.notes) std::cerr << "note: " << n << "\n";
  }
  try {
    s.result = solve_exchange(s.model.problem(), ExchangeOptions{});
  } catch (const InputError& e) {
    return refuse(e);
  }
  return 0;
}

}  // namespace hearthray::cli
