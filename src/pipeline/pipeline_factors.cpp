// The pipeline up to the view factors: options, the patch plan, tracing or the cache,
// diagnostics and smoothing.
#include <algorithm>
#include <fstream>
#include <iterator>
#include <memory>
#include <stdexcept>

#include "hearthray/cache.hpp"
#include "pipeline/pipeline_run.hpp"

namespace hearthray {

using pipeline_detail::Reporter;

std::string to_string(PipelineStage stage) {
  switch (stage) {
    case PipelineStage::build_tracer:
      return "build tracer";
    case PipelineStage::trace:
      return "trace";
    case PipelineStage::read_cache:
      return "read cache";
    case PipelineStage::smooth:
      return "smooth";
    case PipelineStage::thermal_model:
      return "thermal model";
    case PipelineStage::exchange:
      return "exchange";
    case PipelineStage::comfort:
      return "comfort";
  }
  return "?";
}

bool PipelineOptions::IsValid(std::string* error) const {
  auto fail = [&](const std::string& m) {
    if (error) *error = m;
    return false;
  };
  if (rays_per_patch && *rays_per_patch == 0) return fail("rays_per_patch must be at least 1");
  if (threads < 0) return fail("threads must be 0 (all cores) or a positive count");
  if (target_error && !(*target_error > 0 && *target_error < 0.5))
    return fail("target_error must be above 0 and below 0.5");
  if (max_rays_per_patch && *max_rays_per_patch == 0)
    return fail("max_rays_per_patch must be at least 1");
  if (time_limit_s && !(*time_limit_s > 0)) return fail("time_limit_s must be above 0");
  std::string why;
  if (!smoothing.IsValid(&why)) return fail("smoothing: " + why);
  if (!thermal_model.IsValid(&why)) return fail("thermal_model: " + why);
  if (!exchange.IsValid(&why)) return fail("exchange: " + why);
  return true;
}

namespace pipeline_detail {

void check_options(const PipelineOptions& options) {
  std::string why;
  if (!options.IsValid(&why)) throw std::invalid_argument("pipeline options: " + why);
}

namespace {

// The run's scene, patches, rays and seed, before any ray is traced.
FactorRun start_run(const SceneFile& file, const Scene& scene, const PipelineOptions& options) {
  PatchPlan plan = plan_scene(file, scene, options);
  FactorRun run;
  run.scene = std::move(plan.scene);
  run.patches = std::move(plan.patches);
  run.specs = std::move(plan.specs);
  run.rays = std::move(plan.rays);
  const bool uniform = std::all_of(run.rays.begin(), run.rays.end(),
                                   [&](std::uint64_t n) { return n == run.rays.front(); });
  run.rays_per_patch = uniform && !run.rays.empty() ? run.rays.front() : 0;
  run.seed = options.seed.value_or(file.seed.value_or(kDefaultSeed));
  run.sampler = options.sampler.value_or(file.sampler.value_or(kDefaultSampler));
  for (const std::string& w : scene.warnings) run.warnings.push_back({WarningKind::mesh, w});
  return run;
}

void trace_run(const PipelineOptions& options, const Reporter& reporter, FactorRun* run) {
  ViewFactorOptions vf;
  vf.rays_for_patch = run->rays;
  vf.seed = run->seed;
  vf.sampler = run->sampler;
  vf.threads = options.threads;
  vf.tracer = options.tracer;
  vf.progress = reporter.trace();
  reporter.start(PipelineStage::build_tracer);
  const auto built = std::make_shared<const Tracer>(run->scene, vf.tracer);
  const Tracer& tracer = *built;
  const TracerOptions defaults;
  if (vf.tracer.edges == defaults.edges) run->tracer = built;  // for the pictures
  reporter.start(PipelineStage::trace);
  if (!options.split_tracing) {
    run->tallies = trace_tallies(run->scene, run->patches, tracer, vf, &run->stats);
    return;
  }
  const auto trace_range = [&](std::uint32_t begin, std::uint32_t end, TraceStats* stats) {
    ViewFactorOptions range = vf;
    range.emitter_begin = begin;
    range.emitter_end = end;
    return trace_tallies(run->scene, run->patches, tracer, range, stats);
  };
  run->tallies = options.split_tracing(run->rays, trace_range, &run->stats);
}

// Diagnoses and (unless raw) smooths the run's tallies.
void finish_run(const PipelineOptions& options, const Reporter& reporter, FactorRun* run) {
  run->diagnostics =
      diagnose_rays(run->scene, run->patches, run->tallies, analyse_topology(run->scene));
  run->warnings.insert(run->warnings.end(), run->diagnostics.warnings.begin(),
                       run->diagnostics.warnings.end());
  run->notes = run->diagnostics.notes;
  if (!options.smooth) {
    run->factors = raw_view_factors(run->patches, run->tallies);
    return;
  }
  reporter.start(PipelineStage::smooth);
  run->factors =
      smooth_view_factors(run->patches, run->tallies, options.smoothing, &run->smoothing);
}

// Tallies from the cache folder `dir`, else traced and stored there.
FactorRun cached_run(const SceneFile& file, const Scene& scene, const PipelineOptions& options,
                     const std::string& dir, const Reporter& reporter) {
  FactorRun run = start_run(file, scene, options);
  TallyCacheSettings key_settings;
  key_settings.patch_specs = run.specs;
  key_settings.rays = run.rays;
  key_settings.seed = run.seed;
  key_settings.sampler = run.sampler;
  key_settings.smoothed = options.smooth;
  key_settings.panels = file.panels;
  const TallyCacheKey key =
      tally_cache_key(read_mesh_bytes(file.mesh_path), file.mesh, scene, key_settings);
  reporter.start(PipelineStage::read_cache);
  CachedTallies cached = load_cached_tallies(dir, key, run.scene, run.patches, run.rays);
  std::vector<Warning> cache_warnings;
  if (cached.status == CacheStatus::hit) {
    run.tallies = std::move(cached.tallies);
    for (std::uint64_t n : run.tallies.rays) run.stats.rays += n;
    run.cache = CacheOutcome::hit;
    run.cache_path = cached.path;
  } else {
    if (cached.status == CacheStatus::rejected) {
      cache_warnings.push_back({WarningKind::cache, "ignored the cache file " + cached.path + ": " +
                                                        cached.reason + "; tracing again"});
    }
    trace_run(options, reporter, &run);
    const CacheWrite written = store_cached_tallies(dir, key, run.tallies, run.stats.seconds);
    run.cache = written.stored ? CacheOutcome::stored : CacheOutcome::not_stored;
    if (written.stored) {
      run.cache_path = written.path;
    } else {
      cache_warnings.push_back(
          {WarningKind::cache, "could not store the view factors in the cache: " + written.reason});
    }
  }
  finish_run(options, reporter, &run);
  run.warnings.insert(run.warnings.end(), cache_warnings.begin(), cache_warnings.end());
  return run;
}

}  // namespace

FactorRun factor_run(const SceneFile& file, const Scene& scene, const PipelineOptions& options,
                     const HeatFlowJudge& judge) {
  if (options.target_error || file.target_error) return target_run(file, scene, options, judge);
  if (options.max_rays_per_patch || options.time_limit_s)
    throw InputError(
        "a ray cap or a time limit limits the rounds of a target error: give the target too "
        "(--target-error, or target_error in [rays])");
  return one_run(file, scene, options);
}

FactorRun one_run(const SceneFile& file, const Scene& scene, const PipelineOptions& options) {
  const Reporter reporter(options);
  if (options.use_cache) {
    const std::string dir = options.cache_dir.empty() ? default_cache_dir() : options.cache_dir;
    if (!dir.empty()) return cached_run(file, scene, options, dir, reporter);
  }
  FactorRun run = start_run(file, scene, options);
  trace_run(options, reporter, &run);
  finish_run(options, reporter, &run);
  run.cache = options.use_cache ? CacheOutcome::no_folder : CacheOutcome::not_used;
  return run;
}

}  // namespace pipeline_detail

PatchPlan plan_scene(const SceneFile& file, const Scene& scene, const PipelineOptions& options) {
  RayBudget budget = ray_budget(file);
  if (options.rays_per_patch) {
    budget = RayBudget{};
    budget.per_patch = *options.rays_per_patch;
  }
  std::vector<PatchSpec> specs = patch_specs(file, scene);
  if (!options.force) {
    const std::string what = !file.path.empty() ? file.path : scene.source;
    check_run_size(estimate_run_size(scene, specs, budget), what.empty() ? "scene" : what);
  }
  return plan_patches(scene, std::move(specs), budget);
}

FactorRun run_view_factors(const SceneFile& file, const Scene& scene,
                           const PipelineOptions& options) {
  pipeline_detail::check_options(options);
  return pipeline_detail::in_arena(
      options.threads, [&] { return pipeline_detail::factor_run(file, scene, options); });
}

FactorRun run_view_factors(const Scene& scene, const PipelineOptions& options) {
  PipelineOptions uncached = options;
  uncached.use_cache = false;
  return run_view_factors(SceneFile{}, scene, uncached);
}

}  // namespace hearthray
