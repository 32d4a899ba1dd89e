// The goal seek of include/hearthray/heating_plan.hpp against bisection on full pipeline runs.
//
// Reference: for each trial power the scene file's panel power is changed and the whole
// pipeline is run again -- view factors traced, thermal model built, exchange and room air
// solved, the comfort points' angle factors traced, the figures evaluated -- and the power is
// bisected until the bracket is below 1e-9 of it. Nothing of the goal seek is shared but the
// pipeline itself: not its traced-once factors, not its secant steps. With the same seed the
// traced factors are the same, so the two must agree to the search tolerances: the goal seek
// stops within 1e-6 K (or PMV) of the target, i.e. within 1e-6 / (d value / d P) in power,
// about 1e-4 W at the slope here (about 0.015 K/W, 0.6 kW); we allow 1e-6 relative (6e-4 W),
// far below any difference a wrong search would make. (Measured: 634.51276435 W against
// 634.51276452 W by bisection, 6 solves against 34 full runs.)
#include <catch2/catch.hpp>
#include <cmath>

#include "hearthray/heating_plan.hpp"
#include "hearthray/units.hpp"
#include "support/heating_room.hpp"
#include "support/meshes.hpp"
#include "support/scene_fixtures.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

PipelineOptions quiet_options() {
  PipelineOptions options;
  options.threads = 1;
  return options;
}

// The target's value with the panel at `power_W`, by a full pipeline run.
double full_run(const LoadedScene& l, double power_W, const HeatingTarget& target) {
  SceneFile file = l.file;
  for (auto& [name, spec] : file.surfaces)
    if (name == "roof") spec.value = power_W;
  SolvedScene s = model_scene(file, l.scene, quiet_options());
  solve_model_exchange(&s, quiet_options());
  REQUIRE(s.result.status == ExchangeStatus::converged);
  return target_value(scene_comfort(s, quiet_options()).points, target);
}

double bisect(const LoadedScene& l, const HeatingTarget& target, double lo, double hi) {
  const double wanted = target_wanted(target);
  REQUIRE(full_run(l, lo, target) < wanted);
  REQUIRE(full_run(l, hi, target) >= wanted);
  while (hi - lo > 1e-9 * hi) {
    const double mid = 0.5 * (lo + hi);
    (full_run(l, mid, target) < wanted ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

double seek(const LoadedScene& l, const HeatingTarget& target, int* solves) {
  SolvedScene s = model_scene(l.file, l.scene, quiet_options());
  solve_model_exchange(&s, quiet_options());
  const HeatingPlan plan = plan_heating(&s, target, quiet_options());
  REQUIRE(plan.reached);
  *solves = plan.solves;
  return plan.power_W;
}

}  // namespace

TEST_CASE("goal seek reproduces the power bisection finds on full runs",
          "[validation][heating_plan]") {
  ScratchDir dir("heating_plan_validation");
  const LoadedScene l = load_scene_text(dir, box_obj(4, 3, 2.5), heating_room_scene("400 W"));
  SECTION("operative temperature, zone mean, room air solved") {
    HeatingTarget target;
    target.kind = TargetKind::operative_zone_mean;
    target.operative_K = kZeroCelsius + 20;
    int solves = 0;
    const double P = seek(l, target, &solves);
    const double reference = bisect(l, target, 100, 5000);
    INFO("goal seek " << P << " W in " << solves << " solves, bisection " << reference << " W");
    CHECK(P == Approx(reference).epsilon(1e-6));
    CHECK(solves < 15);  // the near-linear response: a handful of secant steps
  }
  SECTION("PMV band, lowest PMV over all points") {
    HeatingTarget target;
    target.kind = TargetKind::pmv_band;
    target.pmv_low = -0.5, target.pmv_high = 0.5;
    int solves = 0;
    const double P = seek(l, target, &solves);
    const double reference = bisect(l, target, 100, 5000);
    INFO("goal seek " << P << " W in " << solves << " solves, bisection " << reference << " W");
    CHECK(P == Approx(reference).epsilon(1e-6));
  }
}
