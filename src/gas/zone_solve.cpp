// The zone solve (see zone_solve.hpp for the equations).
#include "hearthray/zone_solve.hpp"

#include <Eigen/LU>
#include <algorithm>
#include <cmath>

#include "gas/zone_system.hpp"
#include "hearthray/error.hpp"
#include "hearthray/units.hpp"

namespace hearthray {

bool ZoneSolveInput::IsValid(std::string* error) const {
  auto fail = [&](const std::string& m) {
    if (error) *error = m;
    return false;
  };
  if (!exchange || !gases) return fail("exchange areas and gray gases are required");
  const GasExchange& x = *exchange;
  if (gases->size() != x.gas_count()) return fail("gray gases differ from the exchange areas'");
  for (std::size_t g = 0; g < x.gas_count(); ++g)
    if (std::fabs(gases->absorption_coefficient(g) - x.k[g]) > 1e-12 * (1 + x.k[g]))
      return fail("gray gas " + std::to_string(g) +
                  ": absorption coefficient differs from the exchange areas'");
  if (patches.size() != x.patch_count) return fail("one condition per patch is required");
  if (zones.size() != x.zone_count()) return fail("one condition per zone is required");
  for (std::size_t i = 0; i < patches.size(); ++i) {
    const ZonePatchCondition& c = patches[i];
    const std::string at = "patch " + std::to_string(i) + ": ";
    if (!(c.emissivity > 0 && c.emissivity <= 1)) return fail(at + "emissivity must be in (0, 1]");
    if (!std::isfinite(c.temperature) || c.temperature < 0 ||
        (!c.known_temperature && c.temperature <= 0))
      return fail(at + "temperature must be finite and >= 0 K (> 0 as a start value)");
    if (!std::isfinite(c.power)) return fail(at + "power must be finite");
    if (!std::isfinite(c.wall_U) || c.wall_U < 0 || !std::isfinite(c.outside_temperature) ||
        c.outside_temperature < 0)
      return fail(at + "wall U must be >= 0 and the outside temperature >= 0 K");
    if (!std::isfinite(c.convection_h) || c.convection_h < 0)
      return fail(at + "convection coefficient must be finite and >= 0");
    if (c.convection_zone >= int(zones.size()) || c.convection_zone < -1)
      return fail(at + "convection names a zone that does not exist");
  }
  for (std::size_t z = 0; z < zones.size(); ++z) {
    const ZoneGasCondition& c = zones[z];
    const std::string at = "zone " + std::to_string(z) + ": ";
    if (!std::isfinite(c.temperature) || c.temperature <= 0)
      return fail(at + "temperature must be finite and > 0 K");
    if (!std::isfinite(c.heat_release) || c.heat_release < 0)
      return fail(at + "heat release must be finite and >= 0 W");
  }
  if (!std::isfinite(surroundings_temperature) || surroundings_temperature < 0)
    return fail("surroundings temperature must be finite and >= 0 K");
  std::vector<bool> seen(zones.size(), false);
  for (std::size_t z : flow_order) {
    if (z >= zones.size()) return fail("flow order names a zone that does not exist");
    if (seen[z]) return fail("flow order names zone " + std::to_string(z) + " twice");
    seen[z] = true;
  }
  if (!flow_order.empty() && !combustion) return fail("a flow needs the combustion products");
  if (!(tolerance > 0) || max_iterations < 1) return fail("tolerance and iterations must be > 0");
  return true;
}

namespace gas_detail {

ZoneTerms::ZoneTerms(const ZoneSolveInput& in)
    : in_(in), x_(*in.exchange), P_(x_.patch_count), Z_(x_.zone_count()) {
  for (std::size_t i = 0; i < P_; ++i)
    if (!in.patches[i].known_temperature) unknown_.push_back(i);
  for (std::size_t z = 0; z < Z_; ++z)
    if (!in.zones[z].known_temperature) unknown_.push_back(P_ + z);
  column_of_.assign(P_ + Z_, -1);
  for (std::size_t u = 0; u < unknown_.size(); ++u) column_of_[unknown_[u]] = int(u);
  upstream_.assign(Z_, -1);
  in_flow_.assign(Z_, false);
  for (std::size_t m = 0; m < in.flow_order.size(); ++m) {
    in_flow_[in.flow_order[m]] = true;
    if (m > 0) upstream_[in.flow_order[m]] = int(in.flow_order[m - 1]);
  }
  if (!in.flow_order.empty()) first_ = int(in.flow_order.front());
  for (std::size_t i = 0; i < P_; ++i) {
    const ZonePatchCondition& c = in.patches[i];
    if (c.convection_h > 0 && c.convection_zone >= 0)
      films_.push_back({i, std::size_t(c.convection_zone), c.convection_h * x_.areas[i]});
  }
}

void ZoneTerms::finish(const Eigen::VectorXd& T, ZoneState& s) const {
  const std::size_t U = unknown_.size();
  s.residual.resize(Eigen::Index(U));
  s.convection = Eigen::VectorXd::Zero(Eigen::Index(P_ + Z_));
  for (const Film& f : films_) {
    const double q = f.hA * (T(P_ + f.zone) - T(f.patch));
    s.convection(f.patch) += q;
    s.convection(P_ + f.zone) += q;
  }
  for (std::size_t u = 0; u < U; ++u) {
    const std::size_t r = unknown_[u];
    if (r < P_) {
      // Net radiation out plus the wall loss equals the power put in.
      const ZonePatchCondition& c = in_.patches[r];
      s.residual(u) = s.emitted(r) - s.absorbed(r) + wall_loss(r, T(r)) - c.power - s.convection(r);
    } else {
      s.residual(u) = gas_balance(r - P_, T, s);
    }
  }
}

void ZoneTerms::jacobian(const Eigen::VectorXd& T, const Eigen::MatrixXd& d_net,
                         Eigen::MatrixXd* jacobian) const {
  const std::size_t U = unknown_.size();
  *jacobian = Eigen::MatrixXd::Zero(U, U);
  for (std::size_t u = 0; u < U; ++u) {
    const std::size_t r = unknown_[u];
    if (r < P_) {
      jacobian->row(u) = d_net.row(r);
      (*jacobian)(u, u) += in_.patches[r].wall_U * x_.areas[r];
      continue;
    }
    const std::size_t z = r - P_;
    jacobian->row(u) = -d_net.row(r);
    if (in_flow_[z]) {
      (*jacobian)(u, u) -= in_.combustion->products_heat_capacity(T(r));
      const int up = upstream_[z];
      if (up >= 0 && column_of_[P_ + up] >= 0)
        (*jacobian)(u, column_of_[P_ + up]) += in_.combustion->products_heat_capacity(T(P_ + up));
    }
  }
  // The films, q = hA (T_zone - T_patch): a patch's residual (net out + losses - power) holds
  // -q, a zone's (gains - losses) holds -q as well, as it loses what the patch gains.
  for (const Film& f : films_) {
    const int up = column_of_[f.patch], uz = column_of_[P_ + f.zone];
    if (up >= 0) {
      (*jacobian)(up, up) += f.hA;
      if (uz >= 0) (*jacobian)(up, uz) -= f.hA;
    }
    if (uz >= 0) {
      (*jacobian)(uz, uz) -= f.hA;
      if (up >= 0) (*jacobian)(uz, up) += f.hA;
    }
  }
}

Eigen::VectorXd ZoneTerms::apply(const Eigen::VectorXd& T, const Eigen::VectorXd& d_net_v,
                                 const Eigen::VectorXd& v) const {
  const std::size_t U = unknown_.size();
  Eigen::VectorXd out(U);
  for (std::size_t u = 0; u < U; ++u) {
    const std::size_t r = unknown_[u];
    if (r < P_) {
      out(u) = d_net_v(r) + in_.patches[r].wall_U * x_.areas[r] * v(u);
      continue;
    }
    const std::size_t z = r - P_;
    out(u) = -d_net_v(r);
    if (in_flow_[z]) {
      out(u) -= in_.combustion->products_heat_capacity(T(r)) * v(u);
      const int up = upstream_[z];
      if (up >= 0 && column_of_[P_ + up] >= 0)
        out(u) += in_.combustion->products_heat_capacity(T(P_ + up)) * v(column_of_[P_ + up]);
    }
  }
  for (const Film& f : films_) {
    const int up = column_of_[f.patch], uz = column_of_[P_ + f.zone];
    const double vp = up >= 0 ? v(up) : 0.0, vz = uz >= 0 ? v(uz) : 0.0;
    if (up >= 0) out(up) += f.hA * (vp - vz);
    if (uz >= 0) out(uz) += f.hA * (vp - vz);
  }
  return out;
}

Eigen::VectorXd ZoneTerms::diagonal(const Eigen::VectorXd& T,
                                    const Eigen::VectorXd& d_net_diag) const {
  const std::size_t U = unknown_.size();
  Eigen::VectorXd out(U);
  for (std::size_t u = 0; u < U; ++u) {
    const std::size_t r = unknown_[u];
    if (r < P_) {
      out(u) = d_net_diag(u) + in_.patches[r].wall_U * x_.areas[r];
    } else {
      out(u) = -d_net_diag(u);
      if (in_flow_[r - P_]) out(u) -= in_.combustion->products_heat_capacity(T(r));
    }
  }
  for (const Film& f : films_) {
    const int up = column_of_[f.patch], uz = column_of_[P_ + f.zone];
    if (up >= 0) out(up) += f.hA;
    if (uz >= 0) out(uz) -= f.hA;
  }
  return out;
}

double ZoneTerms::wall_loss(std::size_t patch, double T) const {
  const ZonePatchCondition& c = in_.patches[patch];
  return c.wall_U * x_.areas[patch] * (T - c.outside_temperature);
}

double ZoneTerms::enthalpy_in(std::size_t z, const Eigen::VectorXd& T) const {
  if (!in_flow_[z]) return 0;
  if (int(z) == first_) return in_.combustion->air_enthalpy_in;
  return in_.combustion->products_enthalpy(T(P_ + upstream_[z]));
}

double ZoneTerms::enthalpy_out(std::size_t z, const Eigen::VectorXd& T) const {
  return in_flow_[z] ? in_.combustion->products_enthalpy(T(P_ + z)) : 0.0;
}

double ZoneTerms::gas_balance(std::size_t z, const Eigen::VectorXd& T, const ZoneState& s) const {
  const double release = in_.zones[z].known_temperature ? 0.0 : in_.zones[z].heat_release;
  return release + enthalpy_in(z, T) - enthalpy_out(z, T) + s.absorbed(P_ + z) - s.emitted(P_ + z) -
         s.convection(P_ + z);
}

double ZoneTerms::heat_scale() const {
  double scale = 0;
  for (std::size_t i = 0; i < P_; ++i) scale += std::fabs(in_.patches[i].power);
  for (std::size_t z = 0; z < Z_; ++z) scale += in_.zones[z].heat_release;
  if (in_.combustion) scale += in_.combustion->air_enthalpy_in;
  return scale;
}

bool newton_done(const ZoneSolveInput& in, int it, double scale, ZoneSolveResult& result) {
  result.iterations = it;
  if (result.max_residual <= in.tolerance * scale) {
    result.converged = true;
    result.message = "converged";
    return true;
  }
  if (it < in.max_iterations) return false;
  result.message = "Newton's method did not converge in " + std::to_string(it) +
                   " iterations (largest residual " + std::to_string(result.max_residual) + " W)";
  return true;
}

void damped_step(const std::vector<std::size_t>& unknown, const Eigen::VectorXd& step,
                 Eigen::VectorXd& T) {
  for (std::size_t u = 0; u < unknown.size(); ++u) {
    const double t = T(unknown[u]);
    T(unknown[u]) = std::min(std::max(t + step(u), 0.5 * t), 2 * t);
  }
}

namespace {

// Radiation on dense exchange areas: for each gray gas the radiosity matrix
// diag(A) - diag(rho) S_ss factored once; dJ/dT from the same factors.
class DenseRadiation {
 public:
  explicit DenseRadiation(const ZoneSolveInput& in)
      : in_(in), x_(*in.exchange), P_(x_.patch_count), Z_(x_.zone_count()), G_(x_.gas_count()) {
    for (std::size_t g = 0; g < G_; ++g) {
      Eigen::MatrixXd M = -x_.S[g].topLeftCorner(P_, P_);
      for (std::size_t i = 0; i < P_; ++i) {
        M.row(i) *= 1 - in.patches[i].emissivity;
        M(i, i) += x_.areas[i];
      }
      lu_.emplace_back(M);
    }
  }

  // Emission, absorption and what the surroundings take at temperatures T; with `jacobian`
  // (d_net), d(emitted - absorbed of row) / d(T of unknown), N x U.
  void evaluate(const Eigen::VectorXd& T, const std::vector<std::size_t>& unknown_, ZoneState& s,
                Eigen::MatrixXd* jacobian) const {
    const std::size_t N = P_ + Z_, U = unknown_.size();
    s.emitted = Eigen::VectorXd::Zero(N);
    s.absorbed = Eigen::VectorXd::Zero(N);
    if (jacobian) *jacobian = Eigen::MatrixXd::Zero(N, U);
    const double Tsur = in_.surroundings_temperature;
    for (std::size_t g = 0; g < G_; ++g) {
      const GrayGasSet& gas = *in_.gases;
      Eigen::VectorXd E(N), dE(N);
      for (std::size_t r = 0; r < N; ++r) {
        const double t = T(r), t3 = t * t * t;
        E(r) = gas.weight(g, t) * kStefanBoltzmann * t3 * t;
        dE(r) =
            kStefanBoltzmann * (gas.weight_derivative(g, t) * t3 * t + 4 * gas.weight(g, t) * t3);
      }
      const double Esur = gas.weight(g, Tsur) * kStefanBoltzmann * std::pow(Tsur, 4);
      const Eigen::MatrixXd& S = x_.S[g];
      const Eigen::VectorXd& L = x_.lost[g];
      const auto Ss = S.topLeftCorner(P_, P_);
      const auto Spz = S.topRightCorner(P_, Z_);
      const auto Szp = S.bottomLeftCorner(Z_, P_);
      const auto Szz = S.bottomRightCorner(Z_, Z_);
      const Eigen::VectorXd Ez = E.tail(Z_), Ep = E.head(P_);
      Eigen::VectorXd eps(P_), area(P_);
      for (std::size_t i = 0; i < P_; ++i)
        eps(i) = in_.patches[i].emissivity, area(i) = x_.areas[i];
      // Radiosities: (diag(A) - diag(rho) S_ss) J = eps A E + rho (S_pz E_z + L E_sur).
      const Eigen::VectorXd from_gas = Spz * Ez + L.head(P_) * Esur;
      const Eigen::VectorXd b = eps.cwiseProduct(area).cwiseProduct(Ep) +
                                (1 - eps.array()).matrix().cwiseProduct(from_gas);
      const Eigen::VectorXd J = lu_[g].solve(b);
      const Eigen::VectorXd AH = Ss * J + from_gas;
      s.emitted.head(P_) += eps.cwiseProduct(area).cwiseProduct(Ep);
      s.absorbed.head(P_) += eps.cwiseProduct(AH);
      for (std::size_t z = 0; z < Z_; ++z) s.emitted(P_ + z) += 4 * x_.k[g] * x_.volume[z] * Ez(z);
      s.absorbed.tail(Z_) += Szp * J + Szz * Ez + L.tail(Z_) * Esur;
      s.to_surroundings += L.head(P_).dot(J) + L.tail(Z_).dot(Ez) - L.sum() * Esur;
      if (!jacobian) continue;
      Eigen::MatrixXd& d_net = *jacobian;
      // dJ/dT_u = M^-1 db/dT_u: a patch's own emission, or a zone's through the reflections.
      const std::size_t U = unknown_.size();
      Eigen::MatrixXd B = Eigen::MatrixXd::Zero(P_, U);
      for (std::size_t u = 0; u < U; ++u) {
        const std::size_t r = unknown_[u];
        if (r < P_)
          B(r, u) = eps(r) * area(r) * dE(r);
        else
          B.col(u) = (1 - eps.array()).matrix().cwiseProduct(Spz.col(r - P_)) * dE(r);
      }
      const Eigen::MatrixXd dJ = lu_[g].solve(B);
      Eigen::MatrixXd dAH = Ss * dJ;
      Eigen::MatrixXd dAbsZ = Szp * dJ;
      for (std::size_t u = 0; u < U; ++u) {
        const std::size_t r = unknown_[u];
        if (r < P_) {
          d_net(r, u) += eps(r) * area(r) * dE(r);
        } else {
          const std::size_t z = r - P_;
          dAH.col(u) += Spz.col(z) * dE(r);
          dAbsZ.col(u) += Szz.col(z) * dE(r);
          d_net(r, u) += 4 * x_.k[g] * x_.volume[z] * dE(r);
        }
      }
      d_net.topRows(P_) -= eps.asDiagonal() * dAH;
      d_net.bottomRows(Z_) -= dAbsZ;
    }
  }

 private:
  const ZoneSolveInput& in_;
  const GasExchange& x_;
  std::size_t P_, Z_, G_;
  std::vector<Eigen::PartialPivLU<Eigen::MatrixXd>> lu_;
};

// Newton's method on the unknown temperatures, damped; fills converged, iterations, message
// and max_residual, and leaves T and the state at the last iterate.
void newton(const ZoneSolveInput& in, const ZoneTerms& terms, Eigen::VectorXd& T, ZoneState& state,
            ZoneSolveResult& result) {
  const DenseRadiation radiation(in);
  const auto& unknown = terms.unknowns();
  const double heat_scale = terms.heat_scale();  // what the residuals are measured against
  for (int it = 0;; ++it) {
    Eigen::MatrixXd d_net, jacobian;
    state = ZoneState{};
    radiation.evaluate(T, unknown, state, unknown.empty() ? nullptr : &d_net);
    terms.finish(T, state);
    if (!unknown.empty()) terms.jacobian(T, d_net, &jacobian);
    const double radiation_sum = state.emitted.cwiseAbs().sum();
    const double scale = std::max(heat_scale + radiation_sum, 1e-300);
    result.max_residual = unknown.empty() ? 0.0 : state.residual.cwiseAbs().maxCoeff();
    if (newton_done(in, it, scale, result)) return;
    Eigen::FullPivLU<Eigen::MatrixXd> lu(jacobian);
    if (!lu.isInvertible()) {
      result.message =
          "the Jacobian is singular: a zone or patch of unknown temperature "
          "exchanges no heat (clear gas with no flow, or isolated)";
      return;
    }
    damped_step(unknown, lu.solve(-state.residual), T);
  }
}

}  // namespace

// Per-patch and per-zone results at the solution, the flue and the energy balance.
void collect_results(const ZoneSolveInput& in, const ZoneTerms& system, const Eigen::VectorXd& T,
                     const ZoneState& state, ZoneSolveResult& result) {
  const std::size_t P = in.exchange->patch_count, Z = in.exchange->zone_count();
  result.patches.resize(P);
  for (std::size_t i = 0; i < P; ++i) {
    ZonePatchResult& r = result.patches[i];
    r.temperature = T(i);
    r.emitted = state.emitted(i);
    r.absorbed = state.absorbed(i);
    r.net_out = r.emitted - r.absorbed;
    r.convection_in = state.convection(i);
    if (!in.patches[i].known_temperature) r.wall_loss = system.wall_loss(i, T(i));
  }
  result.zones.resize(Z);
  double held = 0;
  for (std::size_t z = 0; z < Z; ++z) {
    ZoneGasResult& r = result.zones[z];
    r.temperature = T(P + z);
    r.heat_release = in.zones[z].known_temperature ? 0.0 : in.zones[z].heat_release;
    r.emitted = state.emitted(P + z);
    r.absorbed = state.absorbed(P + z);
    r.enthalpy_in = system.enthalpy_in(z, T);
    r.enthalpy_out = system.enthalpy_out(z, T);
    r.convection_out = state.convection(P + z);
    r.imbalance = in.zones[z].known_temperature ? -system.gas_balance(z, T, state) : 0.0;
    result.heat_released += r.heat_release;
    held += r.imbalance;
  }
  result.to_surroundings = state.to_surroundings;
  if (!in.flow_order.empty()) {
    const std::size_t last = in.flow_order.back();
    result.air_enthalpy_in = in.combustion->air_enthalpy_in;
    result.flue_enthalpy = result.zones[last].enthalpy_out;
    result.flue_temperature = result.zones[last].temperature;
  }
  double patches_net = 0;  // what the patches give: radiation out less convection in
  for (const ZonePatchResult& r : result.patches) patches_net += r.net_out - r.convection_in;
  result.balance_error = result.heat_released + held + result.air_enthalpy_in + patches_net -
                         result.to_surroundings - result.flue_enthalpy;
}

}  // namespace gas_detail

ZoneSolveResult solve_zones(const ZoneSolveInput& in) {
  std::string why;
  if (!in.IsValid(&why)) throw InputError("zone solve: " + why);
  const GasExchange& x = *in.exchange;
  const std::size_t P = x.patch_count, Z = x.zone_count(), N = P + Z;
  const gas_detail::ZoneTerms terms(in);
  Eigen::VectorXd T(N);
  for (std::size_t i = 0; i < P; ++i) T(i) = in.patches[i].temperature;
  for (std::size_t z = 0; z < Z; ++z) T(P + z) = in.zones[z].temperature;
  ZoneSolveResult result;
  gas_detail::ZoneState state;
  if (x.dense())
    gas_detail::newton(in, terms, T, state, result);
  else
    gas_detail::solve_large(in, terms, T, state, result);
  gas_detail::collect_results(in, terms, T, state, result);
  return result;
}

}  // namespace hearthray
