// Private to the pipeline: the task arena every call runs in, and stage reports to the
// caller's progress callback.
#pragma once

#include <tbb/info.h>
#include <tbb/task_arena.h>

#include <chrono>
#include <utility>

#include "hearthray/pipeline.hpp"

namespace hearthray::pipeline_detail {

// Runs `work` in a task arena of `threads` threads (0 = all cores): every TBB algorithm the
// stages start inside it (smoothing, the exchange solve, Embree's BVH build) is bound to it,
// and the stages with a thread count of their own (tracing, angle factors) get the same one.
template <typename Work>
auto in_arena(int threads, Work&& work) {
  tbb::task_arena arena(threads > 0 ? threads : tbb::info::default_concurrency());
  return arena.execute(std::forward<Work>(work));
}

// Stage starts and tracing progress for PipelineOptions::progress.
class Reporter {
 public:
  explicit Reporter(const PipelineOptions& options) : callback_(options.progress) {}

  void start(PipelineStage stage) const {
    if (callback_) callback_({stage, 0, 0, 0.0});
  }
  // For ViewFactorOptions::progress (empty when the caller gave no callback).
  std::function<void(const TraceProgress&)> trace() const {
    if (!callback_) return {};
    auto callback = callback_;
    return [callback](const TraceProgress& p) {
      callback({PipelineStage::trace, p.rays_done, p.rays_total, p.seconds});
    };
  }

 private:
  std::function<void(const PipelineProgress&)> callback_;
};

// Throws std::invalid_argument naming the field when the options are not valid.
void check_options(const PipelineOptions& options);

// run_view_factors without an arena of its own (the caller runs it in one): target_run when
// the options or the file set a target error, else one_run.
// `judge` gives the heat-flow errors of a round's factors: needed (else InputError) when the
// target is on heat flows.
using HeatFlowJudge = std::function<HeatFlowErrors(const FactorRun&)>;
FactorRun factor_run(const SceneFile& file, const Scene& scene, const PipelineOptions& options,
                     const HeatFlowJudge& judge = {});
// One run at the planned rays (through the cache when asked), no target.
FactorRun one_run(const SceneFile& file, const Scene& scene, const PipelineOptions& options);
// Rounds of one_run until the target error (pipeline_target.cpp).
FactorRun target_run(const SceneFile& file, const Scene& scene, const PipelineOptions& options,
                     const HeatFlowJudge& judge);
// The heat-flow errors of a run's factors (pipeline_heat_error.cpp): the run must still hold
// its tallies. Throws InputError when the thermal model refuses the scene.
HeatFlowErrors heat_flow_errors(const ThermalInput& thermal, const FactorRun& run,
                                const PipelineOptions& options);

}  // namespace hearthray::pipeline_detail
