// Goal seek for radiant heating (see include/hearthray/heating_plan.hpp).
#include "hearthray/heating_plan.hpp"

#include <algorithm>
#include <cmath>

#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/units.hpp"
#include "pipeline/pipeline_run.hpp"

namespace hearthray {

using pipeline_detail::in_arena;

namespace {

// The target is met within this (K, or PMV units); the power steps stop below this share of
// the power. Round numbers of our own, far below what anyone reads.
constexpr double kTargetTolerance = 1e-6;
constexpr double kPowerStep = 1e-9;
// The second trial power, as a multiple of the first.
constexpr double kSecondTrial = 1.25;

bool is_heater(const NodeCondition& c) {
  return c.kind == ConditionKind::power && c.value > 0;
}

// Each heater node's share of its surface's power (by front-face area, as the thermal model
// splits a power over the pieces).
std::vector<double> node_shares(const ThermalModel& m) {
  std::vector<double> piece(m.nodes.size(), 0.0), surface(m.surface_names.size(), 0.0);
  for (std::size_t f = 0; f < m.faces.size(); ++f) {
    if (m.face_side[f] != Side::front) continue;
    piece[m.faces[f].node] += m.factors.areas[f];
    surface[m.node_surface[m.faces[f].node]] += m.factors.areas[f];
  }
  for (std::size_t k = 0; k < piece.size(); ++k) {
    const double whole = surface[m.node_surface[k]];
    piece[k] = whole > 0 ? piece[k] / whole : 0;
  }
  return piece;
}

// The secant search of the least power (see the header). `value(P, &v)` solves at P.
// `answer` is the last power tried when the search fails.
template <class Evaluate>
bool seek_power(double P0, double P_max, double wanted, int max_solves, Evaluate value,
                double* answer, std::string* why) {
  double lo = 0, hi = INFINITY;  // bracket: value(lo) < wanted <= value(hi)
  double v0 = 0, v1 = 0, x0 = P0, x1 = P0 * kSecondTrial;
  auto unsolved = [&](double P) {
    *answer = P;
    *why = "the solve did not converge at " + rounded("%.0f W", P);
    return false;
  };
  if (!value(P0, &v0)) return unsolved(P0);
  (v0 < wanted ? lo : hi) = P0;
  if (!value(x1, &v1)) return unsolved(x1);
  *answer = x1;
  bool zero_tried = false;  // the heaters off: tried once a step points at or below 0 W
  for (int solves = 2;; ++solves) {
    if (x1 == 0 && v1 >= wanted) break;  // met with the heaters off
    if (v1 < wanted) lo = std::max(lo, x1);
    if (v1 >= wanted) hi = std::min(hi, x1);
    if (std::abs(v1 - wanted) <= kTargetTolerance || std::abs(x1 - x0) <= kPowerStep * x1) break;
    if (solves >= max_solves)
      return *why = "the search did not settle in " + std::to_string(max_solves) + " solves", false;
    double x = v1 != v0 ? x1 - (v1 - wanted) * (x1 - x0) / (v1 - v0) : NAN;
    if (x <= 0 && !zero_tried)
      x = 0, zero_tried = true;
    else if (std::isfinite(hi) && !(x > lo && x < hi))
      x = 0.5 * (lo + hi);
    if (!std::isfinite(x)) x = std::min(2 * x1, P_max);
    x = std::clamp(x, 0.0, P_max);
    if (x == x1)  // at the top of the search
      return *why = "the target is not reached at " + rounded("%.0f W", P_max) + " (" +
                    rounded("%.3g", v1) + " against " + rounded("%.3g", wanted) + ")",
             false;
    x0 = x1, v0 = v1, x1 = x;
    *answer = x1;
    if (!value(x1, &v1)) return unsolved(x1);
  }
  *answer = x1;
  return true;
}

}  // namespace

bool HeatingTarget::IsValid(std::string* error) const {
  std::string problem;
  if (kind != TargetKind::pmv_band && !(operative_K > 0 && operative_K < kMaxTemperatureK))
    problem = "the operative temperature target must be a temperature above 0 K";
  if (kind == TargetKind::pmv_band && !(pmv_low < pmv_high && pmv_low >= -3 && pmv_high <= 3))
    problem = "the PMV band must be low < high, within -3 .. +3";
  if (!problem.empty() && error) *error = problem;
  return problem.empty();
}

std::string describe(const HeatingTarget& t) {
  switch (t.kind) {
    case TargetKind::operative_zone_mean:
      return "operative temperature " + rounded("%.1f C", t.operative_K - kZeroCelsius) +
             ", mean over the grid";
    case TargetKind::operative_points:
      return "operative temperature " + rounded("%.1f C", t.operative_K - kZeroCelsius) + " at " +
             (t.points.empty() ? std::string("every named point") : join(t.points));
    default:
      return "PMV between " + rounded("%+.2f", t.pmv_low) + " and " + rounded("%+.2f", t.pmv_high) +
             " at every point";
  }
}

double target_wanted(const HeatingTarget& t) {
  return t.kind == TargetKind::pmv_band ? t.pmv_low : t.operative_K;
}

double target_value(const std::vector<PointComfort>& points, const HeatingTarget& t) {
  double sum = 0, low = INFINITY;
  std::size_t n = 0;
  for (const PointComfort& p : points) {
    if (t.kind == TargetKind::operative_zone_mean) {
      if (p.point.grid_i >= 0) sum += p.operative_K, ++n;
    } else if (t.kind == TargetKind::operative_points) {
      const bool wanted = t.points.empty() ? p.point.grid_i < 0
                                           : std::find(t.points.begin(), t.points.end(),
                                                       p.point.name) != t.points.end();
      if (wanted) low = std::min(low, p.operative_K), ++n;
    } else {
      if (!p.pmv)
        throw InputError(
            "a PMV target needs metabolic_rate, clothing and relative_humidity in [comfort]");
      low = std::min(low, p.pmv->pmv), ++n;
    }
  }
  if (t.kind == TargetKind::operative_points && !t.points.empty() && n != t.points.size())
    throw InputError("the target names points that [comfort] does not have (or names one twice): " +
                     join(t.points));
  if (n == 0)
    throw InputError(t.kind == TargetKind::operative_zone_mean
                         ? "a zone-mean target needs [comfort.grid]"
                         : "the target has no comfort point to look at: add [comfort.point.NAME]");
  return t.kind == TargetKind::operative_zone_mean ? sum / double(n) : low;
}

double scene_heater_power(const SolvedScene& s) {
  double total = 0;
  for (const NodeCondition& c : s.model.surface_conditions)
    if (is_heater(c)) total += c.value;
  return total;
}

bool solve_at_power(SolvedScene* s, double power_W, const PipelineOptions& options) {
  const double scene_W = scene_heater_power(*s);
  if (!(scene_W > 0)) throw InputError("the scene has no heater: no surface has a positive power");
  const std::vector<double> share = node_shares(s->model);
  for (std::size_t k = 0; k < s->model.nodes.size(); ++k) {
    const NodeCondition& given = s->model.surface_conditions[s->model.node_surface[k]];
    if (is_heater(given))
      s->model.nodes[k].condition.value = given.value / scene_W * power_W * share[k];
  }
  solve_model_exchange(s, options);
  return s->result.status == ExchangeStatus::converged;
}

bool HeatingPlanOptions::IsValid(std::string* error) const {
  if (max_power_factor > 1 && max_solves >= 3) return true;
  if (error) *error = "HeatingPlanOptions: max_power_factor > 1 and max_solves >= 3 are needed";
  return false;
}

HeatingPlan plan_heating(SolvedScene* s, const HeatingTarget& target,
                         const PipelineOptions& options, const HeatingPlanOptions& plan_options) {
  std::string error;
  if (!target.IsValid(&error) || !plan_options.IsValid(&error)) throw InputError(error);
  if (!s->file.comfort) throw InputError("a heating plan needs a [comfort] table in the scene");
  HeatingPlan plan;
  plan.scene_power_W = scene_heater_power(*s);
  if (!(plan.scene_power_W > 0))
    throw InputError(
        "the scene has no heater to size: give the panels a power, e.g. power = "
        "\"350 W\" (the plan keeps their proportions)");
  const std::vector<ComfortPoint> points = comfort_points(s->run.scene, *s->file.comfort);
  const std::vector<PointFactors> factors = trace_scene_angle_factors(*s, points, options);
  const double wanted = target_wanted(target);
  auto value = [&](double P, double* v) {
    ++plan.solves;
    if (!solve_at_power(s, P, options)) return false;
    *v = target_value(evaluate_scene_comfort(*s, points, factors), target);
    return true;
  };
  plan.reached = seek_power(plan.scene_power_W, plan_options.max_power_factor * plan.scene_power_W,
                            wanted, plan_options.max_solves, value, &plan.power_W, &plan.message);
  if (plan.reached && plan.power_W == 0) plan.message = "the target is met with the heaters off";
  // The state at the answer (the search's last solve may have been elsewhere).
  if (plan.reached) {
    ++plan.solves;
    solve_at_power(s, plan.power_W, options);
  }
  plan.result = s->result;
  plan.room_air = s->room_air;
  plan.surfaces = surface_heat(s->model, s->result);
  plan.points = evaluate_scene_comfort(*s, points, factors);
  plan.value = target_value(plan.points, target);
  for (std::size_t k = 0; k < s->model.surface_conditions.size(); ++k) {
    if (!is_heater(s->model.surface_conditions[k])) continue;
    plan.heaters.push_back(s->model.surface_names[k]);
    plan.heater_power_W.push_back(s->model.surface_conditions[k].value / plan.scene_power_W *
                                  plan.power_W);
  }
  plan.verdicts = comfort_verdicts(s->run.scene, plan.surfaces, plan.points, target);
  return plan;
}

}  // namespace hearthray
