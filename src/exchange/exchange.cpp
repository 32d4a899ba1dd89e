// Gray-body enclosure exchange by the net-radiation (radiosity) method: Modest, Radiative Heat
// Transfer, 3rd ed., sec. 5.3; Incropera et al., Fundamentals of Heat and Mass Transfer, sec.
// 13.3.
//
// With E = sigma T^4 per face, the radiosities solve M J = diag(eps) E + diag(1 - eps) F_s E_s,
// M = I - diag(1 - eps) F, and the net flux is q = eps (E - G) with G = F J + F_s E_s. This
// form stays valid at eps = 1 (no division by 1 - eps). For fixed surroundings q is affine in
// the nodes' E, so M is factored once and the node balances become
//   Q_rad = c + K E_U            (K: nodes x unknown nodes, exact),
// after which Newton's method on the unknown node temperatures only needs small dense solves.
// That is the path for small problems (ExchangeOptions::dense_face_limit); larger ones go to
// the sparse Newton-Krylov path of exchange_large.cpp.
#include "hearthray/exchange.hpp"

#include <Eigen/Dense>
#include <Eigen/SparseCore>
#include <algorithm>
#include <cmath>
#include <numeric>
#include <vector>

#include "exchange/exchange_krylov.hpp"
#include "exchange/exchange_setup.hpp"
#include "hearthray/error.hpp"
#include "hearthray/units.hpp"

namespace hearthray {

using exchange_detail::Setup;

namespace {

constexpr double kSigma = kStefanBoltzmann;
// Reciprocal condition number below which a matrix is treated as singular.
constexpr double kSingularRcond = 1e-14;
// The energy balance closes when what is unaccounted for is within kBalanceTolerance of the
// largest net flow plus kRoundOff of the gross emission (sum of A sigma T^4): round numbers of
// our own, far above double round-off, far below anything a user would read.
constexpr double kBalanceTolerance = 1e-6;
constexpr double kRoundOff = 1e-12;

double sigma_t4(double kelvin) {
  return kSigma * std::pow(kelvin, 4);
}

// Solves M X = B for all columns of B by a dense LU factorisation. Returns false (with a
// message) on failure.
bool solve_radiosity(const Setup& s, const Eigen::MatrixXd& B, Eigen::MatrixXd* X,
                     ExchangeStatus* status, std::string* message) {
  const Eigen::VectorXd reflect = Eigen::VectorXd::Ones(s.faces) - s.eps;
  Eigen::MatrixXd M = -(reflect.asDiagonal() * Eigen::MatrixXd(*s.F));
  M.diagonal().array() += 1.0;
  Eigen::PartialPivLU<Eigen::MatrixXd> lu(M);
  if (!(lu.rcond() > kSingularRcond)) {
    *status = ExchangeStatus::singular;
    *message = "the radiosity matrix I - (1 - eps) F is singular (reciprocal condition " +
               rounded("%.6g", lu.rcond()) +
               "); check the view factors (rows must sum to 1 or less, none negative)";
    return false;
  }
  *X = lu.solve(B);
  if (!X->allFinite()) {
    *status = ExchangeStatus::singular;
    *message = "the radiosity solve gave non-finite values; check the view factors";
    return false;
  }
  return true;
}

// Everything the node balances need, assembled once for the whole solve.
struct Reduced {
  std::vector<int> unknown;  // node index of each unknown
  std::vector<int> column;   // per node: its unknown column, or -1 when fixed
  Eigen::MatrixXd X;         // radiosity J = X.col(0) + X.rightCols(u) E_U
  Eigen::VectorXd c;         // per node: Q_rad at E_U = 0
  Eigen::MatrixXd K;         // nodes x unknowns: d Q_rad / d E_U
};

bool reduce(const Setup& s, Reduced* r, ExchangeStatus* status, std::string* message) {
  r->column.assign(s.nodes, -1);
  for (std::size_t k = 0; k < s.nodes; ++k) {
    if (!s.fixed[k]) {
      r->column[k] = static_cast<int>(r->unknown.size());
      r->unknown.push_back(static_cast<int>(k));
    }
  }
  const Eigen::Index u = static_cast<Eigen::Index>(r->unknown.size());
  Eigen::MatrixXd B = Eigen::MatrixXd::Zero(s.faces, 1 + u);
  for (std::size_t i = 0; i < s.faces; ++i) {
    const std::uint32_t k = s.node_of_face[i];
    if (s.fixed[k]) {
      B(i, 0) = s.eps[i] * sigma_t4(s.fixed_K[k]);
    } else {
      B(i, 1 + r->column[k]) = s.eps[i];
    }
    B(i, 0) += (1 - s.eps[i]) * s.to_surroundings[i] * s.surroundings_Eb;
  }
  if (!solve_radiosity(s, B, &r->X, status, message)) return false;
  // q = eps (E - F J - F_s E_s), split into its constant part and its part in E_U.
  const Eigen::MatrixXd FX = (*s.F) * r->X;
  r->c = Eigen::VectorXd::Zero(s.nodes);
  r->K = Eigen::MatrixXd::Zero(s.nodes, u);
  for (std::size_t i = 0; i < s.faces; ++i) {
    const std::uint32_t k = s.node_of_face[i];
    const double own = s.fixed[k] ? sigma_t4(s.fixed_K[k]) : 0.0;
    const double weight = s.area[i] * s.eps[i];
    r->c[k] += weight * (own - FX(i, 0) - s.to_surroundings[i] * s.surroundings_Eb);
    r->K.row(k) -= weight * FX.row(i).tail(u);
    if (!s.fixed[k]) r->K(k, r->column[k]) += weight;
  }
  return true;
}

// Convection and wall loss out of node k at temperature T.
double conduction_out(const Setup& s, std::size_t k, double T) {
  return s.hA[k] * (T - s.fluid_K[k]) + s.UA[k] * (T - s.outside_K[k]);
}

// A start for Newton's method: the balance made linear in E = sigma T^4 by writing
// h A (T - T_f) = g (E - sigma T_f^4) with g = h A / (sigma (T_r + T_f)(T_r^2 + T_f^2)), exact
// at T = T_r (a secant). Two passes: T_r from the known temperatures, then from the first
// answer. With radiation only, the first pass is already the exact answer.
// Returns false when a radiation-only node would need E <= 0 (no solution exists).
bool starting_temperatures(const Setup& s, const Reduced& r, Eigen::VectorXd* T,
                           std::string* message) {
  const Eigen::Index u = static_cast<Eigen::Index>(r.unknown.size());
  *T = Eigen::VectorXd::Constant(u, exchange_detail::reference_temperature(s));
  bool any_conduction = false;
  for (int k : r.unknown) any_conduction = any_conduction || s.hA[k] > 0 || s.UA[k] > 0;

  for (int pass = 0; pass < (any_conduction ? 2 : 1); ++pass) {
    Eigen::MatrixXd A(u, u);
    for (Eigen::Index j = 0; j < u; ++j) A.row(j) = r.K.row(r.unknown[j]);
    Eigen::VectorXd rhs(u);
    for (Eigen::Index j = 0; j < u; ++j) {
      const int k = r.unknown[j];
      const double Tr = (*T)[j];
      rhs[j] = s.input_W[k] - r.c[k];
      auto secant = [&](double conductance, double Tx) {
        if (conductance <= 0) return;
        const double g = conductance / (kSigma * (Tr + Tx) * (Tr * Tr + Tx * Tx));
        A(j, j) += g;
        rhs[j] += g * sigma_t4(Tx);
      };
      secant(s.hA[k], s.fluid_K[k]);
      secant(s.UA[k], s.outside_K[k]);
    }
    Eigen::PartialPivLU<Eigen::MatrixXd> lu(A);
    if (!(lu.rcond() > kSingularRcond)) return true;  // keep the reference; Newton reports
    const Eigen::VectorXd E = lu.solve(rhs);
    for (Eigen::Index j = 0; j < u; ++j) {
      if (E[j] > 0 && std::isfinite(E[j])) {
        (*T)[j] = std::pow(E[j] / kSigma, 0.25);
      } else if (!any_conduction) {
        *message = "no solution with positive temperatures: surface '" +
                   s.node_names[r.unknown[j]] +
                   "' would need sigma T^4 = " + rounded("%.6g", E[j]) +
                   " W/m^2 to balance its heat input " + rounded("%.6g", s.input_W[r.unknown[j]]) +
                   " W (more heat is taken out than radiation can bring to it)";
        return false;
      }
    }
  }
  return true;
}

// Node temperatures from the fixed ones and the unknowns.
Eigen::VectorXd node_temperatures(const Setup& s, const Reduced& r, const Eigen::VectorXd& T) {
  Eigen::VectorXd all(s.nodes);
  for (std::size_t k = 0; k < s.nodes; ++k) all[k] = s.fixed[k] ? s.fixed_K[k] : T[r.column[k]];
  return all;
}

struct Balance {
  Eigen::VectorXd residual;  // per unknown: Q_rad + conduction out - input, W
  double scale = 0;          // largest heat flow in the problem, W
};

// Residuals of the unknown nodes' balances. The scale also counts each node's black-body
// emission A sigma T^4: round-off in Q_rad is relative to the gross flows, not the net ones.
Balance balance(const Setup& s, const Reduced& r, const Eigen::VectorXd& T) {
  const Eigen::VectorXd all = node_temperatures(s, r, T);
  Eigen::VectorXd E_U(T.size());
  for (Eigen::Index j = 0; j < T.size(); ++j) E_U[j] = sigma_t4(T[j]);
  const Eigen::VectorXd Q = r.c + r.K * E_U;
  Balance b;
  b.residual.resize(T.size());
  for (std::size_t k = 0; k < s.nodes; ++k) {
    const double conduction = conduction_out(s, k, all[k]);
    const double input = s.fixed[k] ? 0.0 : s.input_W[k];
    b.scale = std::max({b.scale, s.node_area[k] * sigma_t4(all[k]), std::abs(Q[k]),
                        std::abs(conduction), std::abs(input)});
    if (!s.fixed[k]) b.residual[r.column[k]] = Q[k] + conduction - input;
  }
  return b;
}

// Newton's method on the unknown temperatures with the exact Jacobian
//   d R_k / d T_l = K_kl 4 sigma T_l^3 + delta_kl (h A + U A)_k.
// Steps are shortened (same direction) so that no temperature falls below half or rises above
// twice its value: T stays positive and a poor start cannot throw the iterate far away.
void newton(const Setup& s, const Reduced& r, const ExchangeOptions& options, Eigen::VectorXd* T,
            ExchangeResult* result) {
  const Eigen::Index u = T->size();
  for (;;) {
    const Balance b = balance(s, r, *T);
    Eigen::Index worst = 0;
    const double largest = u > 0 ? b.residual.cwiseAbs().maxCoeff(&worst) : 0.0;
    const double allowed = options.tolerance * b.scale;
    if (largest <= allowed) {
      result->status = ExchangeStatus::converged;
      return;
    }
    if (result->iterations >= options.max_iterations) {
      const int k = r.unknown[worst];
      result->status = ExchangeStatus::not_converged;
      result->message = "Newton's method did not converge in " +
                        std::to_string(result->iterations) + " iterations: largest residual " +
                        rounded("%.6g", largest) + " W on surface '" + s.node_names[k] + "' at " +
                        rounded("%.6g", (*T)[worst]) + " K (tolerance " + rounded("%.6g", allowed) +
                        " W)";
      if ((*T)[worst] < 1) {
        result->message +=
            "; its temperature heads to 0 K: the heat taken out of it may be "
            "more than it can receive";
      }
      return;
    }
    Eigen::MatrixXd jacobian(u, u);
    for (Eigen::Index j = 0; j < u; ++j) {
      const int k = r.unknown[j];
      for (Eigen::Index l = 0; l < u; ++l) {
        jacobian(j, l) = r.K(k, l) * 4 * kSigma * std::pow((*T)[l], 3);
      }
      jacobian(j, j) += s.hA[k] + s.UA[k];
    }
    // Row equilibration, so that the singularity test does not depend on node sizes.
    Eigen::VectorXd row_scale = jacobian.cwiseAbs().rowwise().maxCoeff();
    for (Eigen::Index j = 0; j < u; ++j) row_scale[j] = row_scale[j] > 0 ? 1 / row_scale[j] : 1;
    jacobian = row_scale.asDiagonal() * jacobian;
    Eigen::PartialPivLU<Eigen::MatrixXd> lu(jacobian);
    if (!(lu.rcond() > kSingularRcond)) {
      result->status = ExchangeStatus::singular;
      result->message = "the Jacobian of the node balances is singular (reciprocal condition " +
                        rounded("%.6g", lu.rcond()) + ") at Newton iteration " +
                        std::to_string(result->iterations);
      return;
    }
    const Eigen::VectorXd step = -lu.solve(row_scale.asDiagonal() * b.residual);
    double alpha = 1;
    for (Eigen::Index j = 0; j < u; ++j) {
      if (step[j] < 0) alpha = std::min(alpha, 0.5 * (*T)[j] / -step[j]);
      if (step[j] > 0) alpha = std::min(alpha, (*T)[j] / step[j]);
    }
    if (!step.allFinite()) {
      result->status = ExchangeStatus::singular;
      result->message =
          "Newton's step is not finite at iteration " + std::to_string(result->iterations);
      return;
    }
    *T += alpha * step;
    ++result->iterations;
  }
}

// Radiosities of the dense path at the final temperatures, from the factored system.
Eigen::VectorXd dense_radiosity(const Reduced& r, const Eigen::VectorXd& T) {
  const Eigen::Index u = T.size();
  Eigen::VectorXd E_U(u);
  for (Eigen::Index j = 0; j < u; ++j) E_U[j] = sigma_t4(T[j]);
  return r.X.col(0) + r.X.rightCols(u) * E_U;
}

}  // namespace

// "Converged" also means the energy balance closed: the radiation leaving all faces, less
// what the surroundings take, is round-off against the flows. It may not at absurd
// temperatures or powers, where sigma T^4 swamps every net flow in the last digits.
void require_closed_balance(const Setup& s, ExchangeResult* result) {
  if (result->status != ExchangeStatus::converged) return;
  double largest = std::abs(result->surroundings_W), gross = 0, given = 0;
  for (std::size_t k = 0; k < s.nodes; ++k) {
    const NodeResult& n = result->nodes[k];
    largest = std::max({largest, std::abs(n.net_radiation_W), std::abs(n.convection_W),
                        std::abs(n.wall_loss_W), std::abs(n.heat_input_W)});
    gross += n.area * sigma_t4(n.temperature_K);
    if (!s.fixed[k]) given = std::max(given, std::abs(s.input_W[k]));
  }
  const double round_off = kRoundOff * gross;
  const double allowed = kBalanceTolerance * largest + round_off;
  // The whole balance and each node's (a given power reproduced) must close, and a given
  // power must stand above the round-off of the gross flows to be reproduced at all.
  const double worst = std::max(std::abs(result->balance_W), result->final_residual_W);
  if (worst <= allowed && !(given > 0 && given < round_off)) return;
  result->status = ExchangeStatus::not_converged;
  result->message = "the energy balance does not close: " + rounded("%.6g", worst) +
                    " W unaccounted for against a largest flow of " + rounded("%.6g", largest) +
                    " W, where round-off in the gross emission alone is " +
                    rounded("%.3g", round_off) +
                    " W; at these temperatures the net flows are lost in round-off";
}

ExchangeResult solve_exchange(const ExchangeProblem& problem, const ExchangeOptions& options) {
  std::string error;
  if (!options.IsValid(&error)) throw InputError("exchange options: " + error);
  const Setup s = exchange_detail::check_and_set_up(problem);

  ExchangeResult result;
  result.nodes.resize(s.nodes);
  for (std::size_t k = 0; k < s.nodes; ++k) {
    result.nodes[k].name = s.node_names[k];
    result.nodes[k].area = s.node_area[k];
    if (s.fixed[k]) result.nodes[k].temperature_K = s.fixed_K[k];
  }
  if (s.faces > static_cast<std::size_t>(options.dense_face_limit)) {
    result.iterative = true;
    Eigen::VectorXd J, node_K, FJ;
    exchange_detail::solve_large(s, options, &result, &J, &node_K, &FJ);
    exchange_detail::fill_results(s, J, node_K, &result,  // the last iterate
                                  FJ.size() == J.size() ? &FJ : nullptr);
    require_closed_balance(s, &result);
    return result;
  }
  Reduced r;
  if (!reduce(s, &r, &result.status, &result.message)) return result;
  Eigen::VectorXd T;
  std::string infeasible;
  if (r.unknown.empty()) {
    // Every temperature given: the radiosities are the answer, no Newton step is taken (and
    // the empty systems of the start and the step are never formed).
    result.status = ExchangeStatus::converged;
  } else if (!starting_temperatures(s, r, &T, &infeasible)) {
    result.status = ExchangeStatus::not_converged;
    result.message = infeasible;
  } else {
    newton(s, r, options, &T, &result);
  }
  // The last iterate, also when not converged.
  exchange_detail::fill_results(s, dense_radiosity(r, T), node_temperatures(s, r, T), &result);
  require_closed_balance(s, &result);
  return result;
}

namespace exchange_detail {

double reference_temperature(const Setup& s) {
  std::vector<double> levels;
  for (std::size_t k = 0; k < s.nodes; ++k) {
    if (s.fixed[k]) levels.push_back(s.fixed_K[k]);
    if (s.hA[k] > 0) levels.push_back(s.fluid_K[k]);
    if (s.UA[k] > 0) levels.push_back(s.outside_K[k]);
  }
  if (s.surroundings_Eb > 0 && s.to_surroundings.maxCoeff() > 0) {
    levels.push_back(std::pow(s.surroundings_Eb / kSigma, 0.25));
  }
  if (levels.empty()) return 300.0;  // only if nothing is known (the input checks prevent that)
  return std::accumulate(levels.begin(), levels.end(), 0.0) / double(levels.size());
}

void fill_results(const Setup& s, const Eigen::VectorXd& J, const Eigen::VectorXd& node_K,
                  ExchangeResult* result, const Eigen::VectorXd* FJ) {
  Eigen::VectorXd G;
  if (FJ != nullptr) {
    G = *FJ;
  } else {
    multiply(*s.F, J, &G);
  }
  G += s.to_surroundings * s.surroundings_Eb;
  result->faces.assign(s.faces, FaceResult{});
  for (NodeResult& n : result->nodes) n.net_radiation_W = 0;
  result->surroundings_W = 0;
  result->radiosity_residual = 0;
  double net_sum = 0;
  for (std::size_t i = 0; i < s.faces; ++i) {
    const std::uint32_t k = s.node_of_face[i];
    const double E = sigma_t4(node_K[k]);
    FaceResult& f = result->faces[i];
    f.radiosity = J[i];
    f.irradiation = G[i];
    f.net_flux = s.eps[i] * (E - G[i]);
    f.net_power = s.area[i] * f.net_flux;
    net_sum += f.net_power;
    result->surroundings_W += s.area[i] * s.to_surroundings[i] * (J[i] - s.surroundings_Eb);
    result->nodes[k].net_radiation_W += f.net_power;
    const double residual = J[i] - s.eps[i] * E - (1 - s.eps[i]) * G[i];
    result->radiosity_residual = std::max(result->radiosity_residual, std::abs(residual));
  }
  result->balance_W = net_sum - result->surroundings_W;
  result->final_residual_W = 0;
  for (std::size_t k = 0; k < s.nodes; ++k) {
    NodeResult& n = result->nodes[k];
    n.temperature_K = node_K[k];
    n.convection_W = s.hA[k] * (node_K[k] - s.fluid_K[k]);
    n.wall_loss_W = s.UA[k] * (node_K[k] - s.outside_K[k]);
    n.heat_input_W = n.net_radiation_W + n.convection_W + n.wall_loss_W;
    n.residual_W = s.fixed[k] ? 0.0 : n.heat_input_W - s.input_W[k];
    result->final_residual_W = std::max(result->final_residual_W, std::abs(n.residual_W));
  }
}

}  // namespace exchange_detail

bool ExchangeOptions::IsValid(std::string* error) const {
  std::string problem;
  if (!(std::isfinite(tolerance) && tolerance > 0 && tolerance < 1)) {
    problem = "tolerance is " + rounded("%.6g", tolerance) + "; it must be above 0 and below 1";
  } else if (max_iterations < 1) {
    problem = "max_iterations is " + std::to_string(max_iterations) + "; it must be at least 1";
  } else if (dense_face_limit < 0) {
    problem = "dense_face_limit is " + std::to_string(dense_face_limit) + "; it must be >= 0";
  } else if (!(std::isfinite(linear_tolerance) && linear_tolerance > 0 && linear_tolerance < 1)) {
    problem = "linear_tolerance is " + rounded("%.6g", linear_tolerance) +
              "; it must be above 0 and below 1";
  } else if (max_linear_iterations < 1) {
    problem = "max_linear_iterations is " + std::to_string(max_linear_iterations) +
              "; it must be at least 1";
  } else if (coarse_aggregates < 0) {
    problem = "coarse_aggregates is " + std::to_string(coarse_aggregates) +
              "; it must be 0 (none) or more";
  } else if (gmres_restart < 1) {
    problem = "gmres_restart is " + std::to_string(gmres_restart) + "; it must be at least 1";
  }
  if (error != nullptr) *error = problem;
  return problem.empty();
}

std::string ExchangeResult::BriefReport() const {
  std::string text = "exchange: ";
  switch (status) {
    case ExchangeStatus::converged:
      text += "converged";
      break;
    case ExchangeStatus::not_converged:
      text += "NOT CONVERGED";
      break;
    case ExchangeStatus::singular:
      text += "SINGULAR";
      break;
  }
  text += " after " + std::to_string(iterations) + " Newton iteration(s); largest node residual " +
          rounded("%.6g", final_residual_W) + " W; " + std::to_string(faces.size()) + " faces on " +
          std::to_string(nodes.size()) + " surfaces; surroundings receive " +
          rounded("%.6g", surroundings_W) + " W; balance " + rounded("%.6g", balance_W) + " W";
  if (iterative) {
    text += "; sparse Newton-Krylov path: " + std::to_string(linear_iterations) +
            " GMRES iteration(s), last relative residual " + rounded("%.6g", linear_residual) +
            "; largest radiosity residual " + rounded("%.6g", radiosity_residual) + " W/m^2";
  }
  if (!message.empty()) text += "\n  " + message;
  return text;
}

}  // namespace hearthray
