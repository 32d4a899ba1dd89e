// The large path of the exchange solver: Newton's method on radiosities and node temperatures
// together, each step one sparse linear solve by GMRES (an inexact Newton-Krylov method:
// Dembo, Eisenstat & Steihaug, SIAM J. Numer. Anal. 19, 1982; Knoll & Keyes, J. Comput. Phys.
// 193, 2004). Memory grows with the non-zeros of F plus a few vectors per face; F is used as
// given, never copied or densified.
//
// Unknowns: the radiosity J_i of every face, and the emissive power E_k = sigma T_k^4 of every
// node whose temperature is unknown. Equations of the net-radiation method (Modest, Radiative
// Heat Transfer, 3rd ed., ch. 5, sec. 5.3; section recalled from memory, not checked): for
// face i on node k,
//   r_i = J_i - eps_i E_k - (1 - eps_i) G_i = 0,     G_i = (F J)_i + F_is E_s,
// and for every node k of unknown temperature,
//   R_k = sum_{i on k} A_i eps_i (E_k - G_i) + hA_k (T_k - T_f) + UA_k (T_k - T_o) - input_k = 0.
// E rather than T is the unknown: radiation is then linear, so a problem without convection or
// wall loss is one linear solve, and what is left nonlinear is T = (E / sigma)^(1/4) in the
// convection and wall terms: concave and increasing, which Newton's method handles calmly.
//
// A Newton step (dJ, dE) solves the linearised equations. The node rows are diagonal in dE,
//   a_k dE_k - sum_{i on k} A_i eps_i (F dJ)_i = -R_k,
//   a_k = sum_{i on k} A_i eps_i + (hA + UA)_k dT_k/dE_k,
// so dE is eliminated exactly, node by node (a Schur complement on the node block), leaving
//   S dJ = b,   S x = x - (1 - eps) (F x) - eps_i / a_k sum_{i' on k} A_i' eps_i' (F x)_i',
//   b_i = -r_i - eps_i R_k / a_k,
// and then dE_k = (-R_k + sum_{i on k} A_i eps_i (F dJ)_i) / a_k. S = I - W F with W >= 0
// block diagonal by node and rows of W summing to at most 1 (exactly 1 on a reradiating node:
// all it receives it sends out again). With F >= 0 and rows of F summing to at most 1, the
// spectral radius of W F is at most 1, and below 1 when every group of nodes has something
// fixing its temperature level (which the input checks ensure): S is then a non-singular
// M-matrix and GMRES needs only products with F. Few are needed unless the enclosure is
// nearly closed with nearly nothing taking heat out (each bounce then loses little).
//
// Choices measured with bench/exchange (synthetic random enclosures and Monte Carlo box
// furnaces and tunnels, 20k-100k faces, emissivities 0.02-0.9): GMRES on S with no further
// preconditioner took 26-153 iterations per whole solve (a diagonal preconditioner is the
// identity here, F_ii being ~0 for flat patches); restarting after 100 vectors rather than
// 30-50 cut the hardest case (30:1 tunnel at emissivity 0.02) from 153-240 iterations to 66,
// at 100 vectors per face of memory; asking each step's solve only for the reduction that step
// needs (forcing_term below) took 45 iterations on the box furnace where a fixed 1e-12 took 90.
// Starting the unknown nodes at the level that balances their heat in total (balanced_level
// below) rather than at the mean known level took the pipeline benchmark's furnace (20,050
// patches, one node each) from 6 Newton steps and 98 GMRES iterations to 3 and 49. With
// smoothed factors the linear solves multiply by half of F (exchange_reciprocal.hpp: the
// entries left of the diagonal from their mirrors, half the bytes read per product). A step's
// residuals take F J as the start's plus each step's F dJ from its linear solve (no pass over
// F); the residuals that end a solve are measured again with the whole F (see solve()).
// GMRES takes its closing residual and F dJ from the products it made (exchange_krylov.hpp),
// the start's one pass over F also checks the half products and builds the coarse matrix, and
// that matrix is factored again only when the a_k move: measured (2026-12-03, bench_pipeline
// at 98,592 patches, alternating with the previous build, load 3.4-4.6) the exchange stage's
// CPU 6.6-6.8 s against 8.7-8.8 s, the same 4 Newton steps and 33 GMRES iterations.
// GMRES is right-preconditioned by a two-level correction on up to 2048 aggregates of faces
// (exchange_coarse.hpp: the slow modes of S, smooth over the enclosure, solved on a coarse
// matrix R S P built by one pass over F and factored densely, again only when the nodes'
// coefficients move: kRefactor in exchange_coarse.cpp). Measured
// (2026-12-02, 2 cores shared with other work, load 1.7-3.2; CPU seconds of the exchange
// stage, both threads), without -> with it: bench_pipeline's furnace at 98,592 patches 4
// Newton steps and 58 GMRES iterations, 11.4-11.9 s -> 4 and 33, 8.6 s; at 20,050 patches 3 and
// 49, 1.5 s -> 3 and 29, 1.3 s; bench_exchange's 30:1 tunnel (20,306 faces, reradiating) at
// emissivity 0.02 119 -> 27 iterations (solve 1.23 -> 0.44 s), at 0.8 108 -> 20; the easy
// cases move little (box furnace 28 -> 28, random enclosures 14 -> 15 and 23 -> 16, at
// 0.14-0.51 s -> 0.24-0.69 s: one Newton step more in two of them, the forcing terms
// following another path, and the coarse matrix's build). Aggregates cut from the faces'
// centres rather than taken as runs of consecutive faces (strips across a wall): per Newton
// step 18-26 % fewer iterations at 20,050 patches; 512 aggregates rather than 1024: 42 rather
// than 33 at 98,592 patches, 39 rather than 29 at 20,050 (there a fourth Newton step).
// The net power of the radiosity residuals (the energy test of Residuals) is tight: 1e-10 of
// the largest net flow of one node, 8e-10 W on the 98,592-patch furnace, whose residual norm
// allows far more. GMRES minimising the residual's norm alone left it 3e8, 3e6 and 69 times its
// allowance after the first three steps (the faces' and nodes' residuals then 1e-2 and 2e-6 of
// theirs), so the fourth Newton step served it alone. Each GMRES cycle now keeps the residual's
// area-weighted sum at zero (KrylovOptions::zero_sum): measured (2026-12-03, load 1.0-3.7,
// alternating with the previous build) 3 Newton steps and 24 GMRES iterations rather than 4
// and 33, exchange CPU 4.68-4.73 s rather than 5.86-5.98 s; at 20,050 patches 2 and 23 rather
// than 3 and 29, 0.71-0.73 s rather than 0.84-0.86 s; bench_exchange: random enclosures 15 ->
// 13 and 16 -> 14 iterations (a Newton step fewer), box furnace 26 -> 22, the 30:1 tunnel at
// emissivity 0.8 20 -> 15 (one Newton step rather than two), at 0.02 34 -> 34. Then up to 2048
// aggregates rather than 1024, the cost rule of exchange_coarse.cpp deciding on large problems
// (the coarse matrix being factored once a solve): 1370 at 98,592 patches, 22 GMRES iterations
// rather than 24 (exchange CPU 4.36-4.51 s rather than 4.54-4.66 s, five alternations in one
// process on the same factors, load 2.6-3.3); 750 at 20,050 patches as before.
#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <limits>
#include <optional>
#include <string>

#include "exchange/exchange_coarse.hpp"
#include "exchange/exchange_krylov.hpp"
#include "exchange/exchange_reciprocal.hpp"
#include "exchange/exchange_setup.hpp"
#include "hearthray/units.hpp"

namespace hearthray {
namespace exchange_detail {
namespace {

constexpr double kSigma = kStefanBoltzmann;
// A Newton step changes no node's temperature by more than this factor (up or down): the same
// guard as the dense path's, applied per node, so that one node far from its answer does not
// shorten the steps of all the others.
constexpr double kStepFactor = 2.0;
// The loosest relative residual ever asked of a linear solve.
constexpr double kLoosestLinear = 1e-3;

double kelvin_of(double E) {
  return std::pow(E / kSigma, 0.25);
}

struct Iterate {
  Eigen::VectorXd J;  // per face, W/m^2
  Eigen::VectorXd E;  // per node, sigma T^4, W/m^2
  Eigen::VectorXd T;  // per node, K
};

// The stopping rule: with scale the largest heat flow counting black-body emission A sigma T^4
// (as on the dense path), net the largest net heat flow (radiation, convection, wall loss or
// input of a node) and E_max the largest black-body emissive power,
//   max_k |R_k| <= tolerance * scale           (every node's energy balance, W),
//   max_i |r_i| <= tolerance * E_max           (every face's radiosity equation, W/m^2),
//   |sum_i A_i r_i| <= tolerance * max(net, 1e-3 scale), or round-off: 1e-15 sqrt(faces) scale
//                                              (the power the radiosity residuals put into the
//                                              whole energy balance, W).
// The last one keeps a closed enclosure balanced to the tolerance of its largest net flow
// however many faces it has: with reciprocity and closure, sum over faces of A q minus the
// surroundings' share is exactly -sum_i A_i r_i. (1e-3 scale: an isothermal enclosure has no
// net flow to measure against; the round-off term is where a sum over that many faces stops.)
struct Residuals {
  Eigen::VectorXd face;  // r_i, W/m^2
  Eigen::VectorXd node;  // R_k, W (0 on nodes of fixed temperature)
  double energy = 0;     // sum_i A_i r_i, W
  double face_allowed = 0, node_allowed = 0, energy_allowed = 0;
  Eigen::Index worst_face = 0, worst_node = 0;
  double face_ratio = 0, node_ratio = 0, energy_ratio = 0;  // |residual| / allowed
  double ratio() const { return std::max({face_ratio, node_ratio, energy_ratio}); }
};

class LargeSolver {
 public:
  LargeSolver(const Setup& s, const ExchangeOptions& options) : s_(s), options_(options) {
    weight_ = s.area.cwiseProduct(s.eps);
    reflect_ = Eigen::VectorXd::Ones(s.faces) - s.eps;
    from_surroundings_ = s.to_surroundings * s.surroundings_Eb;
    for (std::size_t k = 0; k < s.nodes; ++k) {
      if (!s.fixed[k] && (s.hA[k] > 0 || s.UA[k] > 0)) nonlinear_ = true;
    }
  }

  void solve(ExchangeResult* result, Iterate* it);
  // F J of the last iterate as multiply() gives it, if it was measured so; else null.
  const Eigen::VectorXd* whole_product() const { return FJ_whole_ ? &FJ_ : nullptr; }

 private:
  Residuals evaluate(const Iterate& it) const;
  Residuals evaluate_whole(const Iterate& it);
  // sum over the faces of each node of A_i eps_i v_i, for nodes of unknown temperature.
  Eigen::VectorXd node_sums(const Eigen::VectorXd& v) const;
  void apply_schur(const Eigen::VectorXd& x, Eigen::VectorXd* out, Eigen::VectorXd* Fx) const;
  std::string not_converged_message(const Residuals& res, const Iterate& it, int steps) const;
  double forcing_term(double ratio);
  double balanced_level(const Eigen::VectorXd& Fu, const Eigen::VectorXd& Fj) const;
  void start(Iterate* it);
  Eigen::VectorXd newton_rhs(const Residuals& res, const Iterate& it);
  bool linear_solve_failed(const KrylovSummary& linear, const KrylovOptions& krylov,
                           ExchangeResult* result) const;
  bool update_nodes(const Residuals& res, const Eigen::VectorXd& FdJ, Iterate* it,
                    ExchangeResult* result) const;

  const Setup& s_;
  const ExchangeOptions& options_;
  Eigen::VectorXd weight_;             // A_i eps_i
  Eigen::VectorXd reflect_;            // 1 - eps_i
  Eigen::VectorXd from_surroundings_;  // F_is E_s
  Eigen::VectorXd a_;                  // per node: a_k of the current step
  bool nonlinear_ = false;             // some unknown node has convection or a wall loss
  // Smoothed factors: the linear solves' products from half of F (usable() checked).
  std::optional<ReciprocalProduct> half_;
  // The two-level preconditioner (exchange_coarse.hpp), when ExchangeOptions asks for one.
  std::optional<CoarseSpace> coarse_;
  mutable Eigen::VectorXd scratch_;  // F x of apply_schur when not asked for
  // F J of the current iterate: from the whole F (FJ_whole_), or added up step by step.
  Eigen::VectorXd FJ_;
  bool FJ_whole_ = false;
  double previous_ratio_ = 0;  // ratio of the residuals to the allowed at the previous step
};

Eigen::VectorXd LargeSolver::node_sums(const Eigen::VectorXd& v) const {
  Eigen::VectorXd sums = Eigen::VectorXd::Zero(s_.nodes);
  for (std::size_t i = 0; i < s_.faces; ++i) {
    const std::uint32_t k = s_.node_of_face[i];
    if (!s_.fixed[k]) sums[k] += weight_[i] * v[i];
  }
  return sums;
}

// The residuals at `it` from FJ_, the product F J held for it.
Residuals LargeSolver::evaluate(const Iterate& it) const {
  const Eigen::VectorXd G = FJ_ + from_surroundings_;
  Residuals res;
  res.face.resize(s_.faces);
  Eigen::VectorXd Q = Eigen::VectorXd::Zero(s_.nodes);  // net radiation out of each node, W
  for (std::size_t i = 0; i < s_.faces; ++i) {
    const std::uint32_t k = s_.node_of_face[i];
    res.face[i] = it.J[i] - s_.eps[i] * it.E[k] - reflect_[i] * G[i];
    res.energy += s_.area[i] * res.face[i];
    Q[k] += weight_[i] * (it.E[k] - G[i]);
  }
  // The same scale as the dense path: the largest heat flow, counting black-body emission.
  double scale = 0, net = 0;
  res.node = Eigen::VectorXd::Zero(s_.nodes);
  for (std::size_t k = 0; k < s_.nodes; ++k) {
    const double conduction =
        s_.hA[k] * (it.T[k] - s_.fluid_K[k]) + s_.UA[k] * (it.T[k] - s_.outside_K[k]);
    const double input = s_.fixed[k] ? 0.0 : s_.input_W[k];
    net = std::max({net, std::abs(Q[k]), std::abs(conduction), std::abs(input)});
    scale = std::max(scale, s_.node_area[k] * it.E[k]);
    if (!s_.fixed[k]) res.node[k] = Q[k] + conduction - input;
  }
  scale = std::max(scale, net);
  const double emissive_scale = std::max(it.E.maxCoeff(), s_.surroundings_Eb);
  res.node_allowed = options_.tolerance * scale;
  res.face_allowed = options_.tolerance * emissive_scale;
  res.energy_allowed = std::max(options_.tolerance * std::max(net, 1e-3 * scale),
                                1e-15 * std::sqrt(double(s_.faces)) * scale);
  res.node_ratio = res.node.cwiseAbs().maxCoeff(&res.worst_node) / res.node_allowed;
  res.face_ratio = res.face.cwiseAbs().maxCoeff(&res.worst_face) / res.face_allowed;
  res.energy_ratio = std::abs(res.energy) / res.energy_allowed;
  return res;
}

// The residuals with F J measured by the whole F: what decides the end of a solve.
Residuals LargeSolver::evaluate_whole(const Iterate& it) {
  if (!FJ_whole_) multiply(*s_.F, it.J, &FJ_);
  FJ_whole_ = true;
  return evaluate(it);
}

// out = S x; also F x in *Fx when given.
void LargeSolver::apply_schur(const Eigen::VectorXd& x, Eigen::VectorXd* out,
                              Eigen::VectorXd* Fx) const {
  Eigen::VectorXd& product = Fx != nullptr ? *Fx : scratch_;
  if (half_ && half_->usable()) {
    half_->multiply(x, &product);
  } else {
    multiply(*s_.F, x, &product);
  }
  const Eigen::VectorXd sums = node_sums(product);
  out->resize(s_.faces);
  for (std::size_t i = 0; i < s_.faces; ++i) {
    const std::uint32_t k = s_.node_of_face[i];
    double value = x[i] - reflect_[i] * product[i];
    if (!s_.fixed[k]) value -= s_.eps[i] * sums[k] / a_[k];
    (*out)[i] = value;
  }
}

// The relative residual asked of a step's linear solve (the forcing term of an inexact Newton
// method). A linear problem (radiation only) is asked exactly what brings its residuals under
// the tolerance, with a factor 10 to spare: one solve. A nonlinear one starts loose (1e-3) and
// then follows the residual's progress, Eisenstat & Walker's choice 2 (SIAM J. Sci. Comput.
// 17, 1996: eta_k = 0.9 (|F_k| / |F_k-1|)^2), never tighter than the finishing step needs.
// Measured on the synthetic and pipeline furnaces: 40 % fewer GMRES iterations than asking
// every step for what would finish, the same number of Newton steps.
double LargeSolver::forcing_term(double ratio) {
  double eta = 0.1 / ratio;
  if (nonlinear_) {
    eta = previous_ratio_ > 0 ? std::max(eta, 0.9 * std::pow(ratio / previous_ratio_, 2))
                              : kLoosestLinear;
  }
  previous_ratio_ = ratio;
  return std::max(options_.linear_tolerance, std::min(kLoosestLinear, eta));
}

std::string LargeSolver::not_converged_message(const Residuals& res, const Iterate& it,
                                               int steps) const {
  std::string text = "Newton's method did not converge in " + std::to_string(steps) +
                     " iterations: largest residual ";
  if (res.node_ratio >= std::max(res.face_ratio, res.energy_ratio)) {
    const Eigen::Index k = res.worst_node;
    text += rounded("%.6g", std::abs(res.node[k])) + " W on surface '" + s_.node_names[k] +
            "' at " + rounded("%.6g", it.T[k]) + " K (tolerance " +
            rounded("%.6g", res.node_allowed) + " W)";
    if (it.T[k] < 1) {
      text +=
          "; its temperature heads to 0 K: the heat taken out of it may be more than it can "
          "receive";
    }
  } else if (res.energy_ratio >= res.face_ratio) {
    text += rounded("%.6g", std::abs(res.energy)) +
            " W in the net power of the radiosity residuals over all faces (tolerance " +
            rounded("%.6g", res.energy_allowed) + " W)";
  } else {
    const Eigen::Index i = res.worst_face;
    text += rounded("%.6g", std::abs(res.face[i])) + " W/m^2 in the radiosity of face " +
            std::to_string(i) + " (surface '" + s_.node_names[s_.node_of_face[i]] +
            "'; tolerance " + rounded("%.6g", res.face_allowed) + " W/m^2)";
  }
  return text;
}

// The one temperature T shared by all nodes of unknown temperature at which their heat
// balances add up to zero, every face radiating as a black body at its node's level (J = E):
// with u the faces of those nodes, w_i = A_i eps_i and j the black-body radiosities of the
// faces of fixed nodes (0 elsewhere), G = E(T) F u + F j + F_s E_s and
//   a sigma T^4 + H T = B,   a = sum_{i in u} w_i (1 - (F u)_i),   H = sum_k (hA + UA)_k,
//   B = sum_{i in u} w_i ((F j)_i + F_is E_s) + sum_k (hA T_f + UA T_o)_k + sum_k input_k.
// The left side increases with T (rows of F sum to at most 1), so the root is unique; Newton's
// method from above it (the smaller of the roots of either term alone) falls to it
// monotonically, the left side being convex. Fu = F u and Fj = F j are given (start() makes
// them). Returns 0 when there is no positive root (more heat taken out than put in, or nothing
// fixing the level).
double LargeSolver::balanced_level(const Eigen::VectorXd& Fu, const Eigen::VectorXd& Fj) const {
  if (std::all_of(s_.fixed.begin(), s_.fixed.end(), [](bool f) { return f; })) return 0;
  double a = 0, B = 0, H = 0;
  for (std::size_t i = 0; i < s_.faces; ++i) {
    if (s_.fixed[s_.node_of_face[i]]) continue;
    a += weight_[i] * (1 - Fu[i]);
    B += weight_[i] * (Fj[i] + from_surroundings_[i]);
  }
  for (std::size_t k = 0; k < s_.nodes; ++k) {
    if (s_.fixed[k]) continue;
    H += s_.hA[k] + s_.UA[k];
    B += s_.hA[k] * s_.fluid_K[k] + s_.UA[k] * s_.outside_K[k] + s_.input_W[k];
  }
  a = std::max(a, 0.0);  // round-off of rows summing to 1
  if (!(B > 0) || !(a > 0 || H > 0) || !std::isfinite(a + B + H)) return 0;
  double T = std::numeric_limits<double>::infinity();
  if (a > 0) T = std::pow(B / (a * kSigma), 0.25);
  if (H > 0) T = std::min(T, B / H);
  for (int step = 0; step < 100; ++step) {
    const double f = a * kSigma * std::pow(T, 4) + H * T - B;
    const double slope = 4 * a * kSigma * std::pow(T, 3) + H;
    const double next = T - f / slope;
    if (!(next > 0) || !std::isfinite(next)) return 0;
    const bool settled = std::abs(next - T) <= 1e-12 * T;
    T = next;
    if (settled) break;
  }
  return T;
}

// Start: unknown nodes at the balanced level above (else the mean known level); every face at
// its node's black-body radiosity. The radiosity equations are linear, so the first step puts
// J in line anyway. On the benchmark furnace (roof fixed at 1523 K, the rest at 1506-1534 K)
// the mean known level, 506 K, cost two Newton steps held by the factor kStepFactor.
// One pass over F gives F u and F j, from which the start's F J = E_start F u + F j, and, for
// smoothed factors, the whole product that checks the half products (exchange_reciprocal.hpp),
// and builds the two-level preconditioner's coarse matrix (exchange_coarse.hpp).
void LargeSolver::start(Iterate* it) {
  Eigen::VectorXd unknown(s_.faces), fixed_J(s_.faces), Fu, Fj;
  for (std::size_t i = 0; i < s_.faces; ++i) {
    const std::uint32_t k = s_.node_of_face[i];
    unknown[i] = s_.fixed[k] ? 0.0 : 1.0;
    fixed_J[i] = s_.fixed[k] ? kSigma * std::pow(s_.fixed_K[k], 4) : 0.0;
  }
  PassProducts products{{&unknown, &fixed_J}, {&Fu, &Fj}};
  Eigen::VectorXd check, Fcheck;
  if (s_.reciprocal) {
    check = ReciprocalProduct::check_vector(Eigen::Index(s_.faces));
    products.in.push_back(&check);
    products.out.push_back(&Fcheck);
  }
  // The two-level preconditioner's coarse matrix comes from the same pass over F.
  if (options_.coarse_aggregates > 0) {
    coarse_.emplace(s_, options_.coarse_aggregates, products);
  } else if (s_.reciprocal) {
    multiply_three(*s_.F, unknown, fixed_J, check, &Fu, &Fj, &Fcheck);
  } else {
    multiply_two(*s_.F, unknown, fixed_J, &Fu, &Fj);
  }
  if (s_.reciprocal) half_.emplace(*s_.F, s_.area, Fcheck);
  double level = balanced_level(Fu, Fj);
  if (!(level > 0)) level = reference_temperature(s_);
  const double start_E = kSigma * std::pow(level, 4);
  FJ_ = start_E * Fu + Fj;  // J = E_start u + j below
  FJ_whole_ = false;
  it->E.resize(s_.nodes);
  it->T.resize(s_.nodes);
  for (std::size_t k = 0; k < s_.nodes; ++k) {
    it->E[k] = s_.fixed[k] ? kSigma * std::pow(s_.fixed_K[k], 4) : start_E;
    it->T[k] = s_.fixed[k] ? s_.fixed_K[k] : kelvin_of(start_E);
  }
  it->J.resize(s_.faces);
  for (std::size_t i = 0; i < s_.faces; ++i) it->J[i] = it->E[s_.node_of_face[i]];
}

// The right-hand side of the Newton system in dJ, with dE eliminated node by node (sets a_).
Eigen::VectorXd LargeSolver::newton_rhs(const Residuals& res, const Iterate& it) {
  const Eigen::VectorXd weight_sums = node_sums(Eigen::VectorXd::Ones(s_.faces));
  for (std::size_t k = 0; k < s_.nodes; ++k) {
    if (s_.fixed[k]) continue;
    const double dT_dE = 1 / (4 * kSigma * std::pow(it.T[k], 3));
    a_[k] = weight_sums[k] + (s_.hA[k] + s_.UA[k]) * dT_dE;
  }
  Eigen::VectorXd b(s_.faces);
  for (std::size_t i = 0; i < s_.faces; ++i) {
    const std::uint32_t k = s_.node_of_face[i];
    b[i] = -res.face[i] - (s_.fixed[k] ? 0.0 : s_.eps[i] * res.node[k] / a_[k]);
  }
  return b;
}

// A linear solve that broke down or did not reach its tolerance ends the solve with a status.
bool LargeSolver::linear_solve_failed(const KrylovSummary& linear, const KrylovOptions& krylov,
                                      ExchangeResult* result) const {
  if (linear.breakdown) {
    result->status = ExchangeStatus::singular;
    result->message = "the Newton system of step " + std::to_string(result->iterations + 1) +
                      " is singular (GMRES broke down); check the view factors (rows must sum "
                      "to 1 or less, none negative)";
    return true;
  }
  if (!linear.converged) {
    result->status = ExchangeStatus::not_converged;
    result->message =
        "the linear solve of Newton step " + std::to_string(result->iterations + 1) + " (GMRES(" +
        std::to_string(krylov.restart) + ")) reached relative residual " +
        rounded("%.6g", linear.relative_residual) + ", not the " +
        rounded("%.6g", krylov.tolerance) + " asked, after " + std::to_string(linear.iterations) +
        " iterations; raise max_linear_iterations, or check the view factors (rows must sum "
        "to 1 or less)";
    return true;
  }
  return false;
}

// Moves the node levels by the dE that dJ implies (from F dJ, which GMRES gives: from half of
// F for smoothed factors, equal to the whole product up to round-off), each limited to a
// factor kStepFactor in temperature. Returns false (with a status) when radiation alone cannot
// balance a node.
bool LargeSolver::update_nodes(const Residuals& res, const Eigen::VectorXd& FdJ, Iterate* it,
                               ExchangeResult* result) const {
  const Eigen::VectorXd received = node_sums(FdJ);
  for (std::size_t k = 0; k < s_.nodes; ++k) {
    if (s_.fixed[k]) continue;
    const double dE = (-res.node[k] + received[k]) / a_[k];
    if (!nonlinear_ && !(it->E[k] + dE > 0)) {
      // Radiation only: the problem is linear and this step went to its exact answer.
      result->status = ExchangeStatus::not_converged;
      result->message = "no solution with positive temperatures: surface '" + s_.node_names[k] +
                        "' would need sigma T^4 = " + rounded("%.6g", it->E[k] + dE) +
                        " W/m^2 to balance its heat input " + rounded("%.6g", s_.input_W[k]) +
                        " W (more heat is taken out than radiation can bring to it)";
      return false;
    }
    const double factor4 = std::pow(kStepFactor, 4);
    it->E[k] = std::clamp(it->E[k] + dE, it->E[k] / factor4, it->E[k] * factor4);
    it->T[k] = kelvin_of(it->E[k]);
  }
  return true;
}

// Each step's residuals come from F J added up over the steps (F J_0 from start(), then
// + F dJ from the step's linear solve: no pass over F); whatever ends the solve (converged, not
// converged, not finite) is decided on residuals measured again with the whole F, and a step
// whose added-up residuals looked converged but whose whole ones do not goes on from those.
void LargeSolver::solve(ExchangeResult* result, Iterate* it) {
  start(it);
  const PairedOperator schur = [this](const Eigen::VectorXd& x, Eigen::VectorXd* out,
                                      Eigen::VectorXd* Fx) { apply_schur(x, out, Fx); };
  const LinearOperator two_level = [this](const Eigen::VectorXd& x, Eigen::VectorXd* out) {
    coarse_->apply(x, out);
  };
  KrylovOptions krylov;
  krylov.max_iterations = options_.max_linear_iterations;
  krylov.restart = options_.gmres_restart;
  // A step leaves the face residuals r = -(b - S dJ) (they are linear in J and E, and dE
  // follows from dJ exactly unless kStepFactor holds it), so the net power of its radiosity
  // residuals is minus the area-weighted sum of GMRES's residual: asking each solve for a residual
  // of zero such sum keeps the whole energy balance closed at every step (see the measurements
  // above).
  krylov.zero_sum = &s_.area;
  a_ = Eigen::VectorXd::Ones(s_.nodes);
  for (;;) {
    Residuals res = evaluate(*it);
    const bool ends = !std::isfinite(res.ratio()) || res.ratio() <= 1 ||
                      result->iterations >= options_.max_iterations;
    if (ends && !FJ_whole_) res = evaluate_whole(*it);
    if (!std::isfinite(res.ratio())) {
      result->status = ExchangeStatus::singular;
      result->message = "the residuals are not finite at Newton iteration " +
                        std::to_string(result->iterations) + "; check the view factors";
      return;
    }
    if (res.ratio() <= 1) {
      result->status = ExchangeStatus::converged;
      return;
    }
    if (result->iterations >= options_.max_iterations) {
      result->status = ExchangeStatus::not_converged;
      result->message = not_converged_message(res, *it, result->iterations);
      return;
    }
    const Eigen::VectorXd b = newton_rhs(res, *it);
    krylov.tolerance = forcing_term(res.ratio());
    Eigen::VectorXd dJ, FdJ;
    // The two-level preconditioner (built by start()): its coarse matrix factored for this
    // step's a_k (again only when they moved, see CoarseSpace::factor).
    const bool preconditioned = coarse_ && coarse_->factor(a_);
    const KrylovSummary linear =
        gmres(schur, preconditioned ? two_level : LinearOperator(), b, krylov, &dJ, &FdJ);
    result->linear_iterations += linear.iterations;
    result->linear_residual = linear.relative_residual;
    if (linear_solve_failed(linear, krylov, result)) return;
    if (!update_nodes(res, FdJ, it, result)) return;
    it->J += dJ;
    FJ_ += FdJ;
    FJ_whole_ = false;
    ++result->iterations;
  }
}

}  // namespace

void solve_large(const Setup& s, const ExchangeOptions& options, ExchangeResult* result,
                 Eigen::VectorXd* J, Eigen::VectorXd* node_K, Eigen::VectorXd* FJ) {
  Iterate it;
  LargeSolver solver(s, options);
  solver.solve(result, &it);
  const Eigen::VectorXd* known = solver.whole_product();
  if (known != nullptr) {
    *FJ = *known;
  } else {
    FJ->resize(0);
  }
  *J = std::move(it.J);
  *node_K = std::move(it.T);
}

}  // namespace exchange_detail
}  // namespace hearthray
