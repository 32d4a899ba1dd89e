// The least-power split of a heating plan between its panels (heating_plan.hpp,
// PowerSplit::least), by sequential linear programming. Internal to src/pipeline.
#pragma once

#include <functional>
#include <string>
#include <vector>

namespace hearthray::pipeline_detail {

// What the search needs to know at a set of heater powers (W, one per heater): the target
// quantity and the comfort margins (each <= 0 when its limit holds, in K or PMV units), or
// solved = false when the exchange did not converge.
struct SplitState {
  bool solved = false;
  double value = 0;
  std::vector<double> margins;
};

struct SplitSearch {
  std::function<SplitState(const std::vector<double>& powers_W)> evaluate;
  // The least total power along fixed shares (summing to 1) that meets the target, from a
  // first guess; false when it is not met within the search.
  std::function<bool(const std::vector<double>& shares, double guess_W, double* power_W)> seek;
  double wanted = 0;  // target value to reach
};

struct SplitAnswer {
  std::vector<double> powers_W;  // per heater, at the answer
  bool limits_met = false;       // every margin < 0 there
  int rounds = 0;                // linear programs solved
  std::string note;              // how it ended, for the report
};

// The linear programs aim this far inside every limit (K or PMV units): above the
// linearisation's error over a step (measured 0.004 K on the validation room), far below the
// 0.1 K to which limits and reports are read. A split counts only with every margin < 0, as
// the verdicts judge it.
inline constexpr double kMarginAim = 1e-2;

// From `start` (per heater, W, meeting the target): rounds of (finite-difference response of
// the target and margins to each heater's power; a linear program for the least total power
// meeting the linearised target and limits within a trust region; the target met exactly
// along the new shares by `seek`), keeping a round only when it lowers the power with every
// limit met (or first meets the limits), else halving the trust region.
SplitAnswer least_power_split(const SplitSearch& search, const std::vector<double>& start);

}  // namespace hearthray::pipeline_detail
