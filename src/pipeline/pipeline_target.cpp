// A ray budget set by the error wanted (RayTarget in pipeline.hpp): rounds of one_run, each
// with the rays per patch of the round before times a power of two, until the largest standard
// error of the factors (or, for a target on heat flows, the largest relative error of a
// surface's heat flow: pipeline_heat_error.cpp) is at most the target, or a cap stops it.
//
// Each round is a plain run at its ray count, so its tallies are those of `--rays N` (and come
// from the view-factor cache, or go into it, under the same key): a second run with the same
// target replays the same rounds from the cache without tracing. Earlier rounds' rays are not
// merged into the last: the replicates' spread needs each replicate's own counts, which the
// tallies do not keep; a round's cost is at most the sum of the rounds before it.
#include <algorithm>
#include <chrono>
#include <cmath>

#include "hearthray/error.hpp"
#include "pipeline/pipeline_run.hpp"

namespace hearthray {

std::string to_string(TargetStop stop) {
  switch (stop) {
    case TargetStop::reached:
      return "target reached";
    case TargetStop::ray_cap:
      return "ray cap";
    case TargetStop::run_size:
      return "run-size limit";
    case TargetStop::time_limit:
      return "time limit";
    case TargetStop::not_solved:
      return "exchange solve, which did not converge";
  }
  return "?";
}

double largest_standard_error(const ViewFactors& factors) {
  double worst = 0;
  for (std::size_t i = 0; i < factors.size(); ++i) {
    for (SparseMatrix::InnerIterator it(factors.F, Eigen::Index(i)); it; ++it)
      worst = std::max(worst, factors.standard_error(i, it.value()));
    if (i < factors.to_surroundings.size())
      worst = std::max(worst, factors.standard_error(i, factors.to_surroundings[i]));
  }
  return worst;
}

namespace pipeline_detail {
namespace {

// The smallest power of two at least n (and at least 8: one point per replicate).
std::uint64_t power_of_two_at_least(std::uint64_t n) {
  std::uint64_t p = 8;
  while (p < n && p < (std::uint64_t(1) << 62)) p <<= 1;
  return p;
}

// The next round's rays: n times the power of two (at least 2) that the 1/sqrt(N) law says
// brings `achieved` to `wanted`, at most `cap` (keeping a power-of-two multiple of n); n when
// not even 2 n fits under the cap.
std::uint64_t next_rays(std::uint64_t n, double achieved, double wanted, std::uint64_t cap) {
  double factor = (achieved / wanted) * (achieved / wanted);
  if (!(factor >= 2)) factor = 2;  // also NaN
  const int doublings = int(std::ceil(std::log2(std::min(factor, 1e12))));
  std::uint64_t next = n;
  for (int k = 0; k < doublings && next <= cap / 2; ++k) next <<= 1;
  return next;
}

// Whether a round of n rays per patch is within the run-size limits (always when forced).
bool run_size_allows(const SceneFile& file, const Scene& scene, const PipelineOptions& options,
                     std::uint64_t n) {
  if (options.force) return true;
  RayBudget budget;
  budget.per_patch = n;
  try {
    check_run_size(estimate_run_size(scene, patch_specs(file, scene), budget), "scene");
  } catch (const InputError&) {
    return false;
  }
  return true;
}

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

}  // namespace

FactorRun target_run(const SceneFile& file, const Scene& scene, const PipelineOptions& options,
                     const HeatFlowJudge& judge) {
  RayTarget target;
  target.used = true;
  target.error = options.target_error.value_or(file.target_error.value_or(0));
  target.heat_flows =
      options.target_error ? options.target_on_heat_flows : file.target_on_heat_flows;
  if (target.heat_flows && !judge)
    throw InputError(
        "a target error in percent is relative on the surfaces' heat flows, which only a solve "
        "has (solve, comfort); for view factors alone give the largest standard error wanted "
        "as a plain number, such as 0.001");
  target.max_rays_per_patch = options.max_rays_per_patch.value_or(
      file.target_max_per_patch.value_or(kDefaultTargetMaxRaysPerPatch));
  target.time_limit_s = options.time_limit_s.value_or(file.target_time_limit_s.value_or(0));
  std::uint64_t n = power_of_two_at_least(
      options.rays_per_patch.value_or(file.rays_per_patch.value_or(kDefaultTargetFirstRays)));
  if (n > target.max_rays_per_patch)
    throw InputError("the ray cap of " + std::to_string(target.max_rays_per_patch) +
                     " rays per patch is below the first round's " + std::to_string(n) +
                     " (the first rays per patch rounded up to a power of two): raise the cap "
                     "or give fewer first rays");
  const auto start = std::chrono::steady_clock::now();
  for (;;) {
    PipelineOptions round = options;
    round.rays_per_patch = n;
    const auto round_start = std::chrono::steady_clock::now();
    FactorRun run = one_run(file, scene, round);
    const double round_seconds = seconds_since(round_start);
    target.round_rays.push_back(n);
    if (target.heat_flows) {
      target.heat = judge(run);
      target.achieved = target.heat.largest_relative;
    } else {
      target.achieved = largest_standard_error(run.factors);
    }
    target.round_errors.push_back(target.achieved);
    target.rays_all_rounds += run.stats.rays;
    std::uint64_t next = n;
    if (target.heat_flows && !target.heat.judged) {
      target.stop = TargetStop::not_solved;
    } else if (target.achieved <= target.error) {
      target.stop = TargetStop::reached;
    } else if ((next = next_rays(n, target.achieved, target.error, target.max_rays_per_patch)) ==
               n) {
      target.stop = TargetStop::ray_cap;
    } else if (!run_size_allows(file, scene, options, next)) {
      target.stop = TargetStop::run_size;
    } else if (target.time_limit_s > 0 &&
               seconds_since(start) + round_seconds * double(next) / double(n) >
                   target.time_limit_s) {
      target.stop = TargetStop::time_limit;
    } else {
      n = next;
      continue;
    }
    target.seconds = seconds_since(start);
    run.target = std::move(target);
    return run;
  }
}

}  // namespace pipeline_detail
}  // namespace hearthray
