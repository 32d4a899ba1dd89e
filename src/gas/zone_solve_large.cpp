// The zone solve on sparse exchange areas (see zone_solve.hpp): an inexact Newton-Krylov
// method (Dembo, Eisenstat & Steihaug, SIAM J. Numer. Anal. 19, 1982; Knoll & Keyes,
// J. Comput. Phys. 193, 2004) over the same unknowns, residuals and damping as the dense path.
//
// Per gray gas g, with E^g = a_g(T) sigma T^4 per row and M = diag(A) - diag(rho) S_ss:
//   M J = eps A E_p + rho (S_pz E_z + L_p E_sur),  A H = S_ss J + S_pz E_z + L_p E_sur,
//   zone absorption S_zp J + S_zz E_z + L_z E_sur,
// where S_ss J + S_pz E_z and S_zp J + S_zz E_z are one product of S with (J, E_z). M is
// diagonally dominant (a patch row of S sums to at most A), so GMRES with M's diagonal as
// preconditioner needs few products. The Jacobian of the residuals is applied to a vector v
// of temperature changes exactly: dE = dE/dT v, dJ = M^-1 (eps A dE_p + rho S_pz dE_z), and
// the rest follows as above; flow, films and wall losses add their exact terms
// (gas/zone_system.hpp). Sums over rows run in a fixed order (exchange_detail::multiply), so
// results are the same for any thread count.
#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <string>

#include "core/text.hpp"
#include "exchange/exchange_krylov.hpp"
#include "gas/zone_system.hpp"
#include "hearthray/units.hpp"

namespace hearthray {
namespace gas_detail {
namespace {

using exchange_detail::KrylovOptions;
using exchange_detail::KrylovSummary;

// Relative residual asked of a radiosity solve: the energy balance adds such errors up over
// the patches, and must close to 1e-9 of the firing rate (our own margin, three decades).
constexpr double kRadiosityTolerance = 1e-13;
constexpr int kRadiosityIterations = 1000;
constexpr int kRestart = 60;
// The loosest and tightest relative residual asked of a Newton step's linear solve.
constexpr double kLoosestStep = 1e-3;
constexpr double kTightestStep = 1e-12;

class SparseRadiation {
 public:
  explicit SparseRadiation(const ZoneSolveInput& in)
      : in_(in), x_(*in.exchange), P_(x_.patch_count), Z_(x_.zone_count()), G_(x_.gas_count()) {
    eps_.resize(P_), area_.resize(P_);
    for (std::size_t i = 0; i < P_; ++i) eps_(i) = in.patches[i].emissivity, area_(i) = x_.areas[i];
    for (std::size_t g = 0; g < G_; ++g) {
      Eigen::VectorXd d = x_.sparse_S[g].diagonal();
      self_.push_back(d);
      diag_.push_back(area_ - (1 - eps_.array()).matrix().cwiseProduct(d.head(P_)));
    }
  }

  // Emission, absorption and what the surroundings take at temperatures T; keeps E and dE/dT
  // for the products. False when a radiosity solve did not converge (see failure()).
  bool evaluate(const Eigen::VectorXd& T, ZoneState& s) {
    const std::size_t N = P_ + Z_;
    s.emitted = Eigen::VectorXd::Zero(N);
    s.absorbed = Eigen::VectorXd::Zero(N);
    E_.assign(G_, Eigen::VectorXd(N));
    dE_.assign(G_, Eigen::VectorXd(N));
    const double Tsur = in_.surroundings_temperature;
    for (std::size_t g = 0; g < G_; ++g) {
      const GrayGasSet& gas = *in_.gases;
      for (std::size_t r = 0; r < N; ++r) {
        const double t = T(r), t3 = t * t * t;
        E_[g](r) = gas.weight(g, t) * kStefanBoltzmann * t3 * t;
        dE_[g](r) =
            kStefanBoltzmann * (gas.weight_derivative(g, t) * t3 * t + 4 * gas.weight(g, t) * t3);
      }
      const double Esur = gas.weight(g, Tsur) * kStefanBoltzmann * std::pow(Tsur, 4);
      const Eigen::VectorXd& E = E_[g];
      const Eigen::VectorXd& L = x_.lost[g];
      const Eigen::VectorXd Ep = E.head(P_), Ez = E.tail(Z_);
      const Eigen::VectorXd from_gas = gas_part(g, Ez) + L.head(P_) * Esur;
      const Eigen::VectorXd b = eps_.cwiseProduct(area_).cwiseProduct(Ep) +
                                (1 - eps_.array()).matrix().cwiseProduct(from_gas);
      Eigen::VectorXd J;
      if (!radiosity(g, b, &J)) return false;
      Eigen::VectorXd joined(N), y;
      joined << J, Ez;
      exchange_detail::multiply(x_.sparse_S[g], joined, &y);
      s.emitted.head(P_) += eps_.cwiseProduct(area_).cwiseProduct(Ep);
      s.absorbed.head(P_) += eps_.cwiseProduct(y.head(P_) + L.head(P_) * Esur);
      for (std::size_t z = 0; z < Z_; ++z) s.emitted(P_ + z) += 4 * x_.k[g] * x_.volume[z] * Ez(z);
      s.absorbed.tail(Z_) += y.tail(Z_) + L.tail(Z_) * Esur;
      s.to_surroundings += L.head(P_).dot(J) + L.tail(Z_).dot(Ez) - L.sum() * Esur;
    }
    return true;
  }

  // d(emitted - absorbed of row) for temperature changes dT (per row, 0 where known), at the
  // temperatures of the last evaluate.
  Eigen::VectorXd d_net(const Eigen::VectorXd& dT) {
    const std::size_t N = P_ + Z_;
    Eigen::VectorXd out = Eigen::VectorXd::Zero(N);
    for (std::size_t g = 0; g < G_; ++g) {
      const Eigen::VectorXd dE = dE_[g].cwiseProduct(dT);
      const Eigen::VectorXd dEp = dE.head(P_), dEz = dE.tail(Z_);
      const Eigen::VectorXd b = eps_.cwiseProduct(area_).cwiseProduct(dEp) +
                                (1 - eps_.array()).matrix().cwiseProduct(gas_part(g, dEz));
      Eigen::VectorXd dJ;
      if (!radiosity(g, b, &dJ)) failed_ = true;
      Eigen::VectorXd joined(N), y;
      joined << dJ, dEz;
      exchange_detail::multiply(x_.sparse_S[g], joined, &y);
      out.head(P_) += eps_.cwiseProduct(area_).cwiseProduct(dEp) - eps_.cwiseProduct(y.head(P_));
      for (std::size_t z = 0; z < Z_; ++z)
        out(P_ + z) += 4 * x_.k[g] * x_.volume[z] * dEz(z) - y(P_ + z);
    }
    return out;
  }

  // An estimate of d_net's diagonal for the unknowns (reflections of a row's own emission
  // back to it counted once, by the radiosity matrix's diagonal): the preconditioner.
  Eigen::VectorXd d_net_diagonal(const std::vector<std::size_t>& unknown) const {
    Eigen::VectorXd out = Eigen::VectorXd::Zero(Eigen::Index(unknown.size()));
    for (std::size_t g = 0; g < G_; ++g)
      for (std::size_t u = 0; u < unknown.size(); ++u) {
        const std::size_t r = unknown[u];
        const double dE = dE_[g](r);
        if (r < P_)
          out(u) += eps_(r) * area_(r) * dE * (1 - eps_(r) * self_[g](r) / diag_[g](r));
        else
          out(u) += (4 * x_.k[g] * x_.volume[r - P_] - self_[g](r)) * dE;
      }
    return out;
  }

  bool failed() const { return failed_; }
  const std::string& failure() const { return failure_; }
  int iterations() const { return iterations_; }

 private:
  // S_pz v_z: the patch rows of S times (0, v_z).
  Eigen::VectorXd gas_part(std::size_t g, const Eigen::VectorXd& vz) const {
    Eigen::VectorXd joined = Eigen::VectorXd::Zero(Eigen::Index(P_ + Z_)), y;
    joined.tail(Z_) = vz;
    exchange_detail::multiply(x_.sparse_S[g], joined, &y);
    return y.head(P_);
  }

  // M J = b by GMRES, M's diagonal as preconditioner.
  bool radiosity(std::size_t g, const Eigen::VectorXd& b, Eigen::VectorXd* J) {
    const SparseMatrix& S = x_.sparse_S[g];
    const Eigen::VectorXd& diag = diag_[g];
    auto M = [&](const Eigen::VectorXd& v, Eigen::VectorXd* out) {
      Eigen::VectorXd joined = Eigen::VectorXd::Zero(Eigen::Index(P_ + Z_)), y;
      joined.head(P_) = v;
      exchange_detail::multiply(S, joined, &y);
      *out = area_.cwiseProduct(v) - (1 - eps_.array()).matrix().cwiseProduct(y.head(P_));
    };
    auto precondition = [&](const Eigen::VectorXd& v, Eigen::VectorXd* out) {
      *out = v.cwiseQuotient(diag);
    };
    KrylovOptions options;
    options.tolerance = kRadiosityTolerance;
    options.max_iterations = kRadiosityIterations;
    options.restart = kRestart;
    const KrylovSummary k = exchange_detail::gmres(M, precondition, b, options, J);
    iterations_ += k.iterations;
    if (k.converged) return true;
    failed_ = true;
    if (failure_.empty())
      failure_ = "the radiosity solve of gray gas " + std::to_string(g) +
                 " did not converge (relative residual " + rounded("%.3g", k.relative_residual) +
                 " after " + std::to_string(k.iterations) + " GMRES iterations)";
    return false;
  }

  const ZoneSolveInput& in_;
  const GasExchange& x_;
  std::size_t P_, Z_, G_;
  Eigen::VectorXd eps_, area_;
  std::vector<Eigen::VectorXd> self_;  // per gray gas: S_ii
  std::vector<Eigen::VectorXd> diag_;  // per gray gas: the radiosity matrix's diagonal
  std::vector<Eigen::VectorXd> E_, dE_;
  bool failed_ = false;
  std::string failure_;
  int iterations_ = 0;
};

// One Newton step: J step = -residual by GMRES on Jacobian-vector products, asked for the
// reduction this step needs (forcing term) and no more.
KrylovSummary newton_step(const ZoneTerms& terms, SparseRadiation& radiation,
                          const Eigen::VectorXd& T, const ZoneState& state, double target,
                          Eigen::VectorXd* step) {
  const std::vector<std::size_t>& unknown = terms.unknowns();
  const Eigen::Index U = Eigen::Index(unknown.size()), N = T.size();
  Eigen::VectorXd diag = terms.diagonal(T, radiation.d_net_diagonal(unknown));
  for (Eigen::Index u = 0; u < U; ++u)
    if (!(std::fabs(diag(u)) > 0) || !std::isfinite(diag(u))) diag(u) = 1;
  auto jacobian = [&](const Eigen::VectorXd& v, Eigen::VectorXd* out) {
    Eigen::VectorXd dT = Eigen::VectorXd::Zero(N);
    for (Eigen::Index u = 0; u < U; ++u) dT(Eigen::Index(unknown[std::size_t(u)])) = v(u);
    *out = terms.apply(T, radiation.d_net(dT), v);
  };
  auto precondition = [&](const Eigen::VectorXd& v, Eigen::VectorXd* out) {
    *out = v.cwiseQuotient(diag);
  };
  KrylovOptions options;
  const double norm = state.residual.norm();
  options.tolerance =
      std::clamp(norm > 0 ? 0.1 * target / norm : kLoosestStep, kTightestStep, kLoosestStep);
  options.max_iterations = 2000;
  options.restart = kRestart;
  const Eigen::VectorXd rhs = -state.residual;
  return exchange_detail::gmres(jacobian, precondition, rhs, options, step);
}

}  // namespace

void solve_large(const ZoneSolveInput& in, const ZoneTerms& terms, Eigen::VectorXd& T,
                 ZoneState& state, ZoneSolveResult& result) {
  result.iterative = true;
  SparseRadiation radiation(in);
  const auto& unknown = terms.unknowns();
  const double heat_scale = terms.heat_scale();
  for (int it = 0;; ++it) {
    state = ZoneState{};
    const bool solved = radiation.evaluate(T, state);
    terms.finish(T, state);
    result.iterations = it;
    result.max_residual = unknown.empty() ? 0.0 : state.residual.cwiseAbs().maxCoeff();
    if (!solved) {
      result.message = radiation.failure();
      return;
    }
    const double scale = std::max(heat_scale + state.emitted.cwiseAbs().sum(), 1e-300);
    if (newton_done(in, it, scale, result)) return;
    Eigen::VectorXd step;
    const KrylovSummary k = newton_step(terms, radiation, T, state, in.tolerance * scale, &step);
    result.linear_iterations += k.iterations;
    result.linear_residual = k.relative_residual;
    if (radiation.failed()) {
      result.message = radiation.failure();
      return;
    }
    if (!(k.relative_residual < 1) || !step.allFinite()) {
      result.message = "the linear solve of Newton step " + std::to_string(it + 1) +
                       " made no progress (GMRES relative residual " +
                       rounded("%.3g", k.relative_residual) + " after " +
                       std::to_string(k.iterations) +
                       " iterations): a zone or patch of unknown temperature may exchange no "
                       "heat (clear gas with no flow, or isolated)";
      return;
    }
    damped_step(unknown, step, T);
  }
}

}  // namespace gas_detail
}  // namespace hearthray
