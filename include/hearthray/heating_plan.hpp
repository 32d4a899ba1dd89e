// Goal seek for radiant heating: the least heater power that brings a room to a comfort
// target, and the comfort verdicts at that power.
//
// The heaters are the surfaces given a positive `power`. First their powers are scaled
// together, keeping the layout's proportions (each panel keeps its share of the total): the
// least total power meeting the target along those shares is the smallest scale at which it is
// met (the target quantity rises with the power): the root of target(P) = wanted.
//
// Split (PowerSplit::least, the command line's default): then the shares themselves are
// sought, for the least total power that meets the target with the comfort limits held:
// radiant asymmetry at every point under its limit, the floor surface at most 29 C, and PMV at
// most the band's top. The response of the target and of each limit's margin to each heater's
// power is linearised by finite differences (one solve per heater, 2 % of the total power);
// a linear program (core/linear_program.hpp, simplex) gives the least total power meeting the
// linearised target and limits (those within 2 K of binding: an asymmetry whose case flips
// jumps) within a trust region around the current powers (50 % of the
// total, halved after a round that does not help); along the new shares the target is met
// exactly by the secant above; the round is kept when it lowers the power with the limits
// met (or first meets them). The response being nearly linear, a few rounds settle it; the
// answer is a local minimum of a nearly convex problem, checked in
// validation/test_heating_plan_validation.cpp against a scan of the splits of two panels.
// When no split meets the limits, the proportional answer is kept and the verdicts say which
// limit fails. The floor's lower bound (19 C) is a verdict only: panels overhead barely move it.
//
// Method. View factors and the angle factors from the comfort points do not change with
// power: both are traced once. Each trial power is then one solve of the small non-linear
// system (the radiosity exchange, with the room air's balance when the scene has [room_air])
// and an evaluation of the comfort figures from the new radiosities, no ray traced. The
// response is smooth and nearly linear in power (radiation's T^4 is the only curvature), so
// the root is found by the secant method on the total power, starting from the scene's own
// power and 1.25 times it, guarded by the bracket of the residuals' signs (a secant step
// leaving the bracket bisects it). It stops when the target is met within 1e-6 (K or PMV)
// or the power step is below 1e-9 of the power. validation/test_heating_plan_validation.cpp
// reproduces the power that bisection on full pipeline runs (view factors and angle factors
// traced again each time) finds.
//
// Targets:
//  - operative temperature, zone mean: the mean t_o over the [comfort.grid] points reaches it;
//  - operative temperature at named points (all of [comfort.point.*], or those named): the
//    coolest of them reaches it;
//  - PMV within a band [low, high] (needs metabolic_rate, clothing, relative_humidity in
//    [comfort]): the lowest PMV over all points reaches `low`; a PMV above `high` anywhere at
//    that power is reported as a failed verdict.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "hearthray/comfort.hpp"
#include "hearthray/pipeline.hpp"
#include "hearthray/room_air.hpp"
#include "hearthray/thermal_model.hpp"

namespace hearthray {

enum class TargetKind { operative_zone_mean, operative_points, pmv_band };

struct HeatingTarget {
  TargetKind kind = TargetKind::operative_zone_mean;
  double operative_K = 294.15;      // operative targets
  std::vector<std::string> points;  // operative_points: names (empty = every named point)
  double pmv_low = -0.5, pmv_high = 0.5;

  bool IsValid(std::string* error) const;
};
std::string describe(
    const HeatingTarget& target);  // e.g. "operative temperature 21.0 C, zone mean"

// The value the target compares (K for operative temperature, PMV units for the band) over
// `points` (named and grid points as scene_comfort gives them). Throws InputError when the
// points needed are missing (no grid for the zone mean, a named point that does not exist,
// no PMV).
double target_value(const std::vector<PointComfort>& points, const HeatingTarget& target);
// What target_value must reach (operative_K, or pmv_low).
double target_wanted(const HeatingTarget& target);

// One verdict about comfort at the plan's power, with where its limit comes from.
struct ComfortVerdict {
  std::string what;      // "radiant asymmetry", "floor surface temperature", ...
  bool assessed = true;  // false: the model cannot say (e.g. vertical air temperature difference)
  bool pass = false;
  std::string detail;  // the figures against the limit
  std::string source;  // standard and clause, marked "recalled" where from memory
};

// Floor surface temperature range for people in normal indoor footwear: 19 to 29 C (ISO 7730
// Table A.5, categories A and B; ASHRAE 55 sec. 5.3 -- recalled from memory). Floor surfaces
// are those facing up (normal z > 0.9) and lying within 5 cm of the scene's lowest point.
inline constexpr double kFloorLow_C = 19, kFloorHigh_C = 29;
std::vector<std::size_t> floor_surfaces(const Scene& scene);  // indices of the scene's surfaces

// The verdicts at a solved state: radiant asymmetry limits at every point, floor surface
// temperature, PMV band (when the points carry PMV), the target itself, and the vertical air
// temperature difference (not assessed: one well-mixed air node).
std::vector<ComfortVerdict> comfort_verdicts(const Scene& scene,
                                             const std::vector<SurfaceHeat>& surfaces,
                                             const std::vector<PointComfort>& points,
                                             const HeatingTarget& target);

// How the power is shared between the heaters: in the scene's proportions, or the split of
// least total power that holds the comfort limits (see above).
enum class PowerSplit { proportional, least };

struct HeatingPlanOptions {
  double max_power_factor = 10;  // search up to this times the scene's heater power
  int max_solves = 60;           // per secant search
  PowerSplit split = PowerSplit::proportional;
  bool IsValid(std::string* error) const;
};

struct HeatingPlan {
  bool reached = false;      // the target is met at power_W (false: not within the search)
  std::string message;       // why not
  double power_W = 0;        // least total heater power meeting the target (or the last tried)
  double scene_power_W = 0;  // the scene's own total heater power
  std::vector<std::string> heaters;    // the heated surfaces, in scene order
  std::vector<double> heater_power_W;  // each at power_W
  double value = 0;                    // target_value at power_W
  int solves = 0;                      // exchange (+ air) solves, trial powers
  PowerSplit split = PowerSplit::proportional;
  double proportional_power_W = 0;  // the answer in the scene's proportions
  bool limits_met = false;          // asymmetry, floor <= 29 C, PMV <= band top at power_W
  std::string split_note;           // least: how the split search ended
  // The state at power_W.
  ExchangeResult result;
  std::optional<RoomAirResult> room_air;
  std::vector<SurfaceHeat> surfaces;
  std::vector<PointComfort> points;
  std::vector<ComfortVerdict> verdicts;
};

// Goal seek on a solved scene (its [comfort] table gives the points): traces the angle factors
// once, then finds the least power as above. The scene's model is left at the plan's power.
// Throws InputError when the scene has no heater with a given power, or the target does not
// fit the scene (see target_value).
HeatingPlan plan_heating(SolvedScene* scene, const HeatingTarget& target,
                         const PipelineOptions& options, const HeatingPlanOptions& plan = {});

// Sets the heaters of a modelled scene to `power_W` in total, in the scene's proportions, and
// solves it (with the room air when it has [room_air]). Returns false when it did not converge.
bool solve_at_power(SolvedScene* scene, double power_W, const PipelineOptions& options);
// The same with each heater's power given (W, one per heater in scene order: the surfaces with
// a positive power in the scene file).
bool solve_at_heater_powers(SolvedScene* scene, const std::vector<double>& heater_power_W,
                            const PipelineOptions& options);
// The comfort limits' margins at a solved state, each <= 0 when its limit holds: per point the
// vertical and the horizontal radiant asymmetry less their limits (K), PMV less the band's top
// (PMV targets), per floor surface its highest temperature less 29 C (K).
std::vector<double> comfort_margins(const Scene& scene, const std::vector<SurfaceHeat>& surfaces,
                                    const std::vector<PointComfort>& points,
                                    const HeatingTarget& target);
std::string to_string(PowerSplit split);  // "proportional", "least"
// The total power the scene file gives its heaters (surfaces with a positive power).
double scene_heater_power(const SolvedScene& scene);

}  // namespace hearthray
