// Private to the zone solve: the parts of the zone equations that do not depend on how the
// exchange areas are stored (unknowns, flow, films, wall losses, residuals and their
// derivatives), shared by the dense path (zone_solve.cpp) and the sparse one
// (zone_solve_large.cpp).
#pragma once

#include <Eigen/Dense>
#include <vector>

#include "hearthray/zone_solve.hpp"

namespace hearthray {
namespace gas_detail {

// Everything at temperatures T (patches then zones).
struct ZoneState {
  Eigen::VectorXd emitted, absorbed;  // per row (patches then zones), W
  Eigen::VectorXd convection;         // per row: into a patch (> 0), out of a zone (> 0), W
  double to_surroundings = 0;
  Eigen::VectorXd residual;  // per unknown
};

class ZoneTerms {
 public:
  explicit ZoneTerms(const ZoneSolveInput& in);

  const std::vector<std::size_t>& unknowns() const { return unknown_; }
  // Per row (patches then zones): its unknown's index, or -1.
  const std::vector<int>& column_of() const { return column_of_; }

  // Convection and the residuals of the unknowns, from the radiation already in `s`.
  void finish(const Eigen::VectorXd& T, ZoneState& s) const;
  // Dense Jacobian of the residuals from d(emitted - absorbed of row)/d(T of unknown), N x U.
  void jacobian(const Eigen::VectorXd& T, const Eigen::MatrixXd& d_net,
                Eigen::MatrixXd* jacobian) const;
  // Jacobian times v (per unknown), from d_net v (per row).
  Eigen::VectorXd apply(const Eigen::VectorXd& T, const Eigen::VectorXd& d_net_v,
                        const Eigen::VectorXd& v) const;
  // The Jacobian's diagonal from the diagonal of d_net (per unknown).
  Eigen::VectorXd diagonal(const Eigen::VectorXd& T, const Eigen::VectorXd& d_net_diag) const;

  double wall_loss(std::size_t patch, double T) const;
  double enthalpy_in(std::size_t z, const Eigen::VectorXd& T) const;
  double enthalpy_out(std::size_t z, const Eigen::VectorXd& T) const;
  // Release + enthalpy in - out + absorbed - emitted - convection to the patches (the
  // residual of an unknown zone).
  double gas_balance(std::size_t z, const Eigen::VectorXd& T, const ZoneState& s) const;
  // What the residuals are measured against: powers, releases, the air's enthalpy, W.
  double heat_scale() const;

 private:
  const ZoneSolveInput& in_;
  const GasExchange& x_;
  std::size_t P_, Z_;
  std::vector<std::size_t> unknown_;  // rows (patches then zones) of unknown temperature
  std::vector<int> column_of_;
  std::vector<int> upstream_;
  std::vector<bool> in_flow_;
  int first_ = -1;
  struct Film {
    std::size_t patch, zone;
    double hA;  // W/K
  };
  std::vector<Film> films_;  // convection between a patch and its zone
};

// Per-patch and per-zone results at the solution, the flue and the energy balance.
void collect_results(const ZoneSolveInput& in, const ZoneTerms& terms, const Eigen::VectorXd& T,
                     const ZoneState& state, ZoneSolveResult& result);

// Newton-Krylov on sparse exchange areas (zone_solve_large.cpp): fills converged, iterations,
// message, max_residual and the linear-solve figures, and leaves T and the state at the last
// iterate.
void solve_large(const ZoneSolveInput& in, const ZoneTerms& terms, Eigen::VectorXd& T,
                 ZoneState& state, ZoneSolveResult& result);

// Whether Newton's method stops at iteration `it` with result.max_residual: converged (within
// the tolerance of `scale`, W) or out of iterations; sets converged and the message.
bool newton_done(const ZoneSolveInput& in, int it, double scale, ZoneSolveResult& result);
// T += step on the unknowns, damped: no temperature falls below half or rises above twice its
// value in one step.
void damped_step(const std::vector<std::size_t>& unknown, const Eigen::VectorXd& step,
                 Eigen::VectorXd& T);

}  // namespace gas_detail
}  // namespace hearthray
