// The pipeline (hearthray/pipeline.hpp): the same results as the stages called one by one,
// every stage bound to the thread count of the options, warnings as values.
#include <tbb/task_arena.h>

#include <catch2/catch.hpp>
#include <mutex>
#include <set>
#include <sstream>
#include <utility>
#include <vector>

#include "hearthray/pipeline.hpp"
#include "support/cli_run.hpp"
#include "support/meshes.hpp"
#include "support/scene_fixtures.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

// Every progress report with the concurrency of the task arena it was made in.
struct ArenaLog {
  std::mutex mutex;
  std::vector<std::pair<PipelineStage, int>> events;

  std::function<void(const PipelineProgress&)> callback() {
    return [this](const PipelineProgress& p) {
      const int concurrency = tbb::this_task_arena::max_concurrency();
      const std::lock_guard<std::mutex> lock(mutex);
      events.emplace_back(p.stage, concurrency);
    };
  }
  std::set<PipelineStage> stages() const {
    std::set<PipelineStage> s;
    for (const auto& e : events) s.insert(e.first);
    return s;
  }
};

}  // namespace

TEST_CASE("the pipeline gives the factors of the stages called one by one", "[pipeline]") {
  const ScratchDir dir("pipeline-same");
  const LoadedScene l = load_scene_text(dir, unit_cube_obj(2), kHotFloorColdRoof);
  PipelineOptions options;
  options.rays_per_patch = 4000;
  options.seed = 7;
  const FactorRun run = run_view_factors(l.file, l.scene, options);

  ViewFactorOptions vf;
  vf.rays_per_patch = 4000;
  vf.seed = 7;
  const Tracer tracer(l.scene);
  const Tallies tallies = trace_tallies(l.scene, l.patches, tracer, vf);
  SmoothingSummary summary;
  const ViewFactors smoothed =
      smooth_view_factors(l.patches, tallies, SmoothingOptions{}, &summary);
  REQUIRE(run.factors.size() == smoothed.size());
  CHECK(run.tallies.hit_count == tallies.hit_count);
  CHECK(run.seed == 7);
  CHECK(run.rays_per_patch == 4000);
  for (std::size_t i = 0; i < smoothed.size(); ++i)
    for (std::size_t j = 0; j < smoothed.size(); ++j)
      CHECK(run.factors.F.coeff(Eigen::Index(i), Eigen::Index(j)) ==
            smoothed.F.coeff(Eigen::Index(i), Eigen::Index(j)));
}

TEST_CASE("threads = 1 binds every stage of a solve and of comfort to one thread", "[pipeline]") {
  // Each stage reports its start from inside the task arena it runs in (tracing reports from
  // its workers); smoothing and the exchange solve run their parallel loops in that arena.
  const ScratchDir dir("pipeline-threads");
  const std::string comfort = std::string(kHotFloorColdRoof) +
                              "[comfort]\nair_temperature = \"21 C\"\nrays = 2000\n"
                              "[comfort.point.middle]\nposition = [\"0.5 m\", \"0.5 m\", "
                              "\"0.5 m\"]\n";
  const LoadedScene l = load_scene_text(dir, unit_cube_obj(2), comfort);
  for (const int threads : {1, 2}) {
    ArenaLog log;
    PipelineOptions options;
    options.rays_per_patch = 20000;
    options.threads = threads;
    options.progress = log.callback();
    SolvedScene s = model_scene(l.file, l.scene, options);
    solve_model_exchange(&s, options);
    REQUIRE(s.result.status == ExchangeStatus::converged);
    const SceneComfort c = scene_comfort(s, options);
    CHECK(c.points.size() == 1);
    const std::set<PipelineStage> seen = log.stages();
    for (PipelineStage stage :
         {PipelineStage::build_tracer, PipelineStage::trace, PipelineStage::smooth,
          PipelineStage::thermal_model, PipelineStage::exchange, PipelineStage::comfort})
      CHECK(seen.count(stage) == 1);
    for (const auto& [stage, concurrency] : log.events) {
      INFO("threads " << threads << ", stage " << to_string(stage));
      CHECK(concurrency == threads);
    }
  }
}

TEST_CASE("ray warnings come back with their kind", "[pipeline]") {
  // The roof turned inside out: rays from the room arrive on its back.
  std::istringstream obj(unit_cube_obj());
  Scene scene = load_obj(obj, "cube");
  const int roof = scene.find_surface("roof");
  REQUIRE(roof >= 0);
  const Surface& r = scene.surfaces[std::size_t(roof)];
  for (std::uint32_t t = r.first_triangle; t < r.first_triangle + r.triangle_count; ++t)
    std::swap(scene.triangles[t].v[1], scene.triangles[t].v[2]);
  PipelineOptions options;
  options.rays_per_patch = 2000;
  const FactorRun run = run_view_factors(scene, options);
  bool back_faces = false;
  for (const Warning& w : run.warnings)
    back_faces = back_faces || w.kind == WarningKind::back_faces;
  CHECK(back_faces);
}
