// Least-power split of a heating plan between its panels (see pipeline/heating_split.hpp).
#include "pipeline/heating_split.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <numeric>

#include "core/linear_program.hpp"
#include "core/text.hpp"

namespace hearthray::pipeline_detail {
namespace {

// Round numbers of our own: the finite-difference step and the first trust region as shares
// of the total power; the rounds stop when a round saves less than kSaving of the power (0.1 %:
// below what the traced factors' own errors let one tell apart), the trust region falls below
// kSmallestRegion, or after kRounds linear programs.
constexpr double kStep = 0.02;
constexpr double kFirstRegion = 0.5;
constexpr double kSmallestRegion = 0.01;
constexpr double kSaving = 1e-3;
constexpr int kRounds = 12;
// A limit more than this below its bound (K, or PMV units) at the point and after each step
// of the difference quotients is not linearised (see linear_step).
constexpr double kFarFromLimit = 2;

double total(const std::vector<double>& p) {
  return std::accumulate(p.begin(), p.end(), 0.0);
}

bool limits_met(const SplitState& s) {
  return s.solved &&
         std::all_of(s.margins.begin(), s.margins.end(), [](double m) { return m < 0; });
}

double worst_margin(const SplitState& s) {
  return s.margins.empty() ? -INFINITY : *std::max_element(s.margins.begin(), s.margins.end());
}

// The linearised problem around x (powers over the scale S): least sum of y with the target's
// value and every margin, as their first-order change from x says, met; y within `region` of
// x and >= 0. Returns the new powers (scaled) or empty when no such y exists.
std::vector<double> linear_step(const SplitState& base, const std::vector<SplitState>& moved,
                                const Eigen::VectorXd& x, double wanted, double region) {
  const int n = int(x.size()), margins = int(base.margins.size());
  Eigen::MatrixXd A = Eigen::MatrixXd::Zero(1 + margins + 2 * n, n);
  Eigen::VectorXd b = Eigen::VectorXd::Zero(A.rows());
  // value(y) ~ value(x) + g (y - x) >= wanted  ->  -g y <= value(x) - wanted - g x
  Eigen::VectorXd g(n);
  for (int i = 0; i < n; ++i) g(i) = (moved[std::size_t(i)].value - base.value) / kStep;
  A.row(0) = -g.transpose();
  b(0) = base.value - wanted - g.dot(x);
  for (int k = 0; k < margins; ++k) {  // margin(y) ~ m(x) + G (y - x) <= 0
    // Limits far from binding here and after every step are left out: an asymmetry whose case
    // flips (cool wall to warm wall, 10 K to 23 K) jumps, and its difference quotient would
    // forbid steps that no limit forbids. Every limit is still checked on the solved state.
    double nearest = base.margins[std::size_t(k)];
    for (const SplitState& m : moved) nearest = std::max(nearest, m.margins[std::size_t(k)]);
    if (nearest < -kFarFromLimit) continue;
    Eigen::VectorXd G(n);
    for (int i = 0; i < n; ++i)
      G(i) = (moved[std::size_t(i)].margins[std::size_t(k)] - base.margins[std::size_t(k)]) / kStep;
    A.row(1 + k) = G.transpose();
    b(1 + k) = G.dot(x) - base.margins[std::size_t(k)] - kMarginAim;
  }
  for (int i = 0; i < n; ++i) {  // |y_i - x_i| <= region
    A(1 + margins + 2 * i, i) = 1;
    b(1 + margins + 2 * i) = x(i) + region;
    A(2 + margins + 2 * i, i) = -1;
    b(2 + margins + 2 * i) = std::max(0.0, x(i) - region) == 0 ? 0 : region - x(i);
  }
  const LinearProgramResult lp = solve_linear_program(Eigen::VectorXd::Ones(n), A, b);
  if (lp.status != LinearProgramStatus::optimal) return {};
  return std::vector<double>(lp.x.data(), lp.x.data() + n);
}

}  // namespace

SplitAnswer least_power_split(const SplitSearch& search, const std::vector<double>& start) {
  SplitAnswer answer;
  answer.powers_W = start;
  const std::size_t n = start.size();
  const double scale = total(start);
  SplitState best = search.evaluate(start);
  answer.limits_met = limits_met(best);
  if (n < 2 || !(scale > 0)) {
    answer.note = "one heater: nothing to split";
    return answer;
  }
  double region = kFirstRegion;
  std::string ended = "after " + std::to_string(kRounds) + " rounds";
  for (answer.rounds = 0; answer.rounds < kRounds;) {
    if (region < kSmallestRegion) {
      ended = "no smaller power found near the answer";
      break;
    }
    Eigen::VectorXd x(static_cast<Eigen::Index>(n));
    for (std::size_t i = 0; i < n; ++i) x(Eigen::Index(i)) = answer.powers_W[i] / scale;
    std::vector<SplitState> moved;
    for (std::size_t i = 0; i < n; ++i) {
      std::vector<double> p = answer.powers_W;
      p[i] += kStep * scale;
      moved.push_back(search.evaluate(p));
      if (!moved.back().solved) return answer.note = "a solve did not converge", answer;
    }
    ++answer.rounds;
    const std::vector<double> y = linear_step(best, moved, x, search.wanted, region);
    const double sum = total(y);
    if (y.empty() || !(sum > 0)) {
      ended = answer.limits_met ? "no smaller power meets the limits near the answer"
                                : "no split meets every limit in the linearised problem, so the "
                                  "scene's proportions are kept";
      break;
    }
    if (answer.limits_met && sum * scale >= total(answer.powers_W) * (1 - kSaving)) {
      ended = "converged (the linearised problem saves under " + percent(kSaving) + ")";
      break;
    }
    std::vector<double> shares(y);
    for (double& s : shares) s = s < 1e-9 * sum ? 0 : s / sum;  // rounding dust: off, not 1e-17
    double power = 0;
    if (!search.seek(shares, sum * scale, &power)) {
      region *= 0.5;
      continue;
    }
    std::vector<double> p(shares);
    for (double& v : p) v *= power;
    const SplitState state = search.evaluate(p);
    const double before = total(answer.powers_W);
    const bool better = limits_met(state) && (!answer.limits_met || power < before * (1 - 1e-12));
    const bool closer = !answer.limits_met && !limits_met(state) && state.solved &&
                        worst_margin(state) < worst_margin(best);
    if (better || closer) {
      answer.powers_W = p;
      best = state;
      const bool was_met = answer.limits_met;
      answer.limits_met = limits_met(state);
      if (was_met && power > before * (1 - kSaving)) {
        ended = "converged (the last round saved under " + percent(kSaving) + ")";
        break;
      }
    } else {
      region *= 0.5;
    }
  }
  answer.note = "least total power over the heaters' split by sequential linear programming, " +
                std::to_string(answer.rounds) + (answer.rounds == 1 ? " round, " : " rounds, ") +
                ended;
  return answer;
}

}  // namespace hearthray::pipeline_detail
