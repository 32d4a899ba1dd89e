// The firing: schedule, controller and implicit time steps (see firing.hpp).
#include <Eigen/LU>
#include <algorithm>
#include <cmath>
#include <limits>

#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/firing.hpp"
#include "hearthray/units.hpp"
#include "transient/firing_system.hpp"

namespace hearthray {

double WallLayer::conductivity_at(double T) const {
  if (conductivity_table.empty()) return conductivity;
  if (T <= conductivity_table.front().first) return conductivity_table.front().second;
  if (T >= conductivity_table.back().first) return conductivity_table.back().second;
  for (std::size_t i = 1; i < conductivity_table.size(); ++i) {
    const auto& [T1, k1] = conductivity_table[i];
    const auto& [T0, k0] = conductivity_table[i - 1];
    if (T <= T1) return k0 + (k1 - k0) * (T - T0) / (T1 - T0);
  }
  return conductivity_table.back().second;
}

namespace transient {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// The schedule as it runs: the segment, when it began and the set point it began from.
struct ScheduleState {
  std::size_t segment = 0;
  double start_s = 0;
  double from_K = 0;

  // Set point at time t (NaN while cooling naturally).
  double set_point(const ScheduleSegment& g, double t) const {
    switch (g.kind) {
      case ScheduleSegment::Kind::ramp: {
        const double dir = g.target >= from_K ? 1.0 : -1.0;
        const double sp = from_K + dir * g.rate * (t - start_s);
        return dir > 0 ? std::min(sp, g.target) : std::max(sp, g.target);
      }
      case ScheduleSegment::Kind::hold:
        return from_K;
      case ScheduleSegment::Kind::cool:
        return kNaN;
    }
    return kNaN;
  }
  // End time of a timed segment (infinite for natural cooling).
  double end_s(const ScheduleSegment& g) const {
    switch (g.kind) {
      case ScheduleSegment::Kind::ramp:
        return start_s + std::fabs(g.target - from_K) / g.rate;
      case ScheduleSegment::Kind::hold:
        return start_s + g.duration;
      case ScheduleSegment::Kind::cool:
        return std::numeric_limits<double>::infinity();
    }
    return 0;
  }
};

// PI control, u = (e + I / T_i) / band clamped to [0, 1] of the installed power, taken
// implicitly: the error at the end of the step sets the step's power (backward Euler on the
// controller as on the kiln, so a control point that answers the heaters at once cannot make
// the loop ring), the integral I += e dt held while the output is saturated and the error
// would drive it further (anti-windup by conditional integration).
struct Controller {
  double band_K, integral_s, installed_W;
  double integral = 0;  // K s

  double raw(double e, double dt) const { return (e + (integral + e * dt) / integral_s) / band_K; }
  // Power for a step of dt ending with `measured` at `set_point` (NaN: off), and its
  // derivative with respect to `measured`.
  double power(double set_point, double measured, double dt, double* slope) const {
    *slope = 0;
    if (std::isnan(set_point)) return 0;
    const double u = raw(set_point - measured, dt);
    if (u > 0 && u < 1) *slope = -installed_W * (1 + dt / integral_s) / band_K;
    return installed_W * std::clamp(u, 0.0, 1.0);
  }
  void advance(double set_point, double measured, double dt) {
    if (std::isnan(set_point)) return;
    const double e = set_point - measured, u = raw(e, dt);
    if ((u > 0 && u < 1) || (u >= 1 && e < 0) || (u <= 0 && e > 0)) integral += e * dt;
  }
};

class Stepper {
 public:
  explicit Stepper(const FiringSystem& s) : s_(s) {}

  // One backward-Euler step of dt from T0 towards `set_point` at its end; the power follows
  // from the controller at the end of the step. False when Newton's method fails.
  bool step(const Eigen::VectorXd& T0, double dt, double set_point, const Controller& control,
            Eigen::VectorXd* T, double* power) const {
    const Eigen::Index U = Eigen::Index(s_.unknowns.size());
    *T = T0;
    for (int it = 0; it < 40; ++it) {
      Eigen::MatrixXd J;
      double slope = 0;
      *power = control.power(set_point, control_K(*T), dt, &slope);
      const HeatFlows h = heat_flows(s_, *T, T0, *power, &J);
      Eigen::VectorXd R(U);
      Eigen::MatrixXd A = -J;
      add_control_derivative(slope, A);
      for (Eigen::Index i = 0; i < U; ++i) {
        const double C = s_.unknowns[std::size_t(i)].capacity;
        R(i) = C * ((*T)(i)-T0(i)) / dt - h.into(i);
        A(i, i) += C / dt;
        if (std::size_t(i) < s_.nodes && s_.held_K[std::size_t(i)]) {
          A.row(i).setZero();
          A(i, i) = 1;
          R(i) = (*T)(i) - *s_.held_K[std::size_t(i)];
        }
      }
      const Eigen::VectorXd delta = Eigen::PartialPivLU<Eigen::MatrixXd>(A).solve(-R);
      if (!delta.allFinite()) return false;
      // Damped: no temperature moves more than 300 K or below half its value in one go.
      for (Eigen::Index i = 0; i < U; ++i)
        (*T)(i) = std::max(0.5 * (*T)(i), (*T)(i) + std::clamp(delta(i), -300.0, 300.0));
      if (delta.cwiseAbs().maxCoeff() < 1e-7) return true;
    }
    return false;
  }

  // d(heat into heated node m)/dT_n = share_m dP/dT_ctl dT_ctl/dT_n, subtracted from A = -J.
  void add_control_derivative(double slope, Eigen::MatrixXd& A) const {
    if (slope == 0) return;
    double area = 0;
    for (std::size_t n = 0; n < s_.nodes; ++n)
      if (s_.node_surface[n] == s_.control_surface) area += s_.node_area[n];
    for (std::size_t n = 0; n < s_.nodes; ++n) {
      if (s_.node_surface[n] != s_.control_surface) continue;
      for (std::size_t m = 0; m < s_.nodes; ++m)
        A(Eigen::Index(m), Eigen::Index(n)) -= s_.heater_share[m] * slope * s_.node_area[n] / area;
    }
  }

  double control_K(const Eigen::VectorXd& T) const { return surface_mean(T, s_.control_surface); }
  double surface_mean(const Eigen::VectorXd& T, std::size_t surface) const {
    double sum = 0, area = 0;
    for (std::size_t n = 0; n < s_.nodes; ++n)
      if (s_.node_surface[n] == surface)
        sum += T(Eigen::Index(n)) * s_.node_area[n], area += s_.node_area[n];
    return area > 0 ? sum / area : kNaN;
  }

 private:
  const FiringSystem& s_;
};

// The whole firing: the loop over steps, with the bookkeeping of samples, segments, the
// times targets were reached and energy.
class Firing {
 public:
  Firing(const ThermalModel& model, const FiringInput& in)
      : in_(in),
        s_(build_firing_system(model, in)),
        stepper_(s_),
        controller_{in.band_K, in.integral_s, s_.installed_W} {
    names(model);
    T_ = Eigen::VectorXd::Constant(Eigen::Index(s_.unknowns.size()), in.start_K);
    for (std::size_t n = 0; n < s_.nodes; ++n)
      if (s_.held_K[n]) T_(Eigen::Index(n)) = *s_.held_K[n];
    start_T_ = T_;
    state_.from_K = in.start_K;
    r_.control_reached_s.assign(in.schedule.size(), -1);
    r_.load_reached_s.assign(loads_.size(), std::vector<double>(in.schedule.size(), -1));
    r_.load_peak_K.assign(loads_.size(), 0.0);
    r_.notes = s_.notes;
    r_.installed_W = s_.installed_W;
    biot_notes(model);
  }

  FiringResult run() {
    const double limit_s = 3600 * in_.hours_max.value_or(200.0);
    double dt = std::min(in_.max_step_s, 10.0);
    open_segment();
    sample(0);
    while (state_.segment < in_.schedule.size()) {
      if (t_ > limit_s) {
        r_.message = "stopped after " + rounded("%.4g", t_ / 3600) +
                     " h (max_hours) before the schedule ended";
        break;
      }
      if (!advance(dt)) break;
    }
    r_.completed = state_.segment >= in_.schedule.size() && r_.message.empty();
    energy_totals();
    return std::move(r_);
  }

 private:
  const ScheduleSegment& segment() const { return in_.schedule[state_.segment]; }

  // Tries one step of at most dt; on success moves time on. Updates dt for the next try.
  bool advance(double& dt) {
    const double end = state_.end_s(segment());
    const double h = std::min({dt, end - t_, in_.max_step_s});
    const double sp = state_.set_point(segment(), t_ + h);
    double power = 0;
    Eigen::VectorXd T;
    if (!stepper_.step(T_, h, sp, controller_, &T, &power)) return retry(dt, h, 0.5);
    const double err = local_error(T, h);
    if (err > in_.tolerance_K)
      return retry(dt, h, std::max(0.2, 0.9 * std::sqrt(in_.tolerance_K / err)));
    account(T, h, power);
    controller_.advance(sp, stepper_.control_K(T), h);
    t_ += h;
    T_ = T;
    ++r_.steps;
    sample(power);
    dt = h * std::min(2.0, std::max(0.2, 0.9 * std::sqrt(in_.tolerance_K / std::max(err, 1e-12))));
    close_segment(end);
    return true;
  }

  bool retry(double& dt, double h, double factor) {
    ++r_.rejected_steps;
    dt = h * factor;
    if (dt >= 1e-3) return true;
    r_.message = "the time step fell below 1 ms at " + rounded("%.4g", t_ / 3600) +
                 " h: the firing could not be followed (Newton's method or the error control "
                 "failed)";
    return false;
  }

  // Backward Euler's local error, dt/2 |dT/dt(new) - dT/dt(old)|, over unknowns with mass.
  double local_error(const Eigen::VectorXd& T, double h) {
    const Eigen::VectorXd rate = (T - T_) / h;
    double err = 0;
    if (rate_.size() == rate.size())
      for (Eigen::Index i = 0; i < rate.size(); ++i)
        if (s_.unknowns[std::size_t(i)].capacity > 0)
          err = std::max(err, 0.5 * h * std::fabs(rate(i) - rate_(i)));
    next_rate_ = rate;
    return err;
  }

  void account(const Eigen::VectorXd& T, double h, double power) {
    rate_ = next_rate_;
    const HeatFlows f = heat_flows(s_, T, T_, power, nullptr);
    double held = 0;
    for (std::size_t n = 0; n < s_.nodes; ++n)
      if (s_.held_K[n]) held += f.into(Eigen::Index(n));
    r_.energy_in_J += power * h;
    r_.case_loss_J += f.case_loss * h;
    r_.other_loss_J += (f.to_surroundings + f.other_loss + held) * h;
  }

  void open_segment() {
    r_.segments.push_back({int(state_.segment), t_, 0, 0, true, 0});
    rising_.push_back(segment().target >= state_.from_K);
  }

  void close_segment(double end) {
    const ScheduleSegment& g = segment();
    const double control = stepper_.control_K(T_);
    const bool cooled = g.kind == ScheduleSegment::Kind::cool && control <= g.target;
    if (!(t_ >= end - 1e-9 * std::max(1.0, end)) && !cooled) return;
    SegmentReport& rep = r_.segments.back();
    rep.end_s = t_;
    rep.control_end_K = control;
    rep.followed = rep.max_lag_K <= in_.lag_limit_K;
    const double sp = state_.set_point(g, t_);
    state_.from_K = std::isnan(sp) ? control : sp;
    state_.start_s = t_;
    ++state_.segment;
    if (state_.segment < in_.schedule.size()) open_segment();
  }

  void sample(double power) {
    FiringSample x;
    x.time_s = t_;
    x.segment = int(std::min(state_.segment, in_.schedule.size() - 1));
    x.set_point_K = state_.segment < in_.schedule.size() ? state_.set_point(segment(), t_) : kNaN;
    x.control_K = stepper_.control_K(T_);
    x.power_W = power;
    for (std::size_t s = 0; s < r_.surface_names.size(); ++s)
      x.surface_K.push_back(stepper_.surface_mean(T_, s));
    for (std::size_t w = 0; w < walls_.size(); ++w) x.case_K.push_back(case_mean(walls_[w]));
    for (std::size_t l = 0; l < loads_.size(); ++l) x.load_inner_K.push_back(load_inner(l));
    if (!std::isnan(x.set_point_K) && !r_.segments.empty()) {
      SegmentReport& rep = r_.segments.back();
      rep.max_lag_K = std::max(rep.max_lag_K, x.set_point_K - x.control_K);
    }
    reached(x);
    r_.samples.push_back(std::move(x));
  }

  // First times the control point and each load reach each ramp's target.
  void reached(const FiringSample& x) {
    for (std::size_t g = 0; g < rising_.size(); ++g) {
      const ScheduleSegment& seg = in_.schedule[g];
      if (seg.kind != ScheduleSegment::Kind::ramp) continue;
      const bool up = rising_[g];
      auto hit = [&](double T) { return up ? T >= seg.target : T <= seg.target; };
      if (r_.control_reached_s[g] < 0 && hit(x.control_K)) r_.control_reached_s[g] = x.time_s;
      for (std::size_t l = 0; l < loads_.size(); ++l)
        if (r_.load_reached_s[l][g] < 0 && hit(x.surface_K[loads_[l]]))
          r_.load_reached_s[l][g] = x.time_s;
    }
    for (std::size_t l = 0; l < loads_.size(); ++l)
      r_.load_peak_K[l] = std::max(r_.load_peak_K[l], x.surface_K[loads_[l]]);
  }

  // The deepest cell of a slab load (area-weighted over its pieces) or the lumped temperature.
  double load_inner(std::size_t l) const {
    double sum = 0, area = 0;
    for (std::size_t n = 0; n < s_.nodes; ++n) {
      if (s_.node_surface[n] != loads_[l]) continue;
      const std::size_t deepest = s_.deepest[n];
      sum += T_(Eigen::Index(deepest)) * s_.node_area[n];
      area += s_.node_area[n];
    }
    return area > 0 ? sum / area : kNaN;
  }

  double case_mean(std::size_t surface) const {
    double sum = 0, area = 0;
    for (const OuterFace& o : s_.outer)
      if (o.surface == surface) sum += T_(Eigen::Index(o.unknown)) * o.area, area += o.area;
    return area > 0 ? sum / area : kNaN;
  }

  void names(const ThermalModel& model) {
    r_.surface_names = model.surface_names;
    for (const auto& [name, mass] : in_.surfaces) {
      const auto it = std::find(model.surface_names.begin(), model.surface_names.end(), name);
      const std::size_t s = std::size_t(it - model.surface_names.begin());
      if (mass.kind == SurfaceMass::Kind::wall) {
        walls_.push_back(s);
        r_.wall_names.push_back(name);
      } else {
        loads_.push_back(s);
        r_.load_names.push_back(name);
      }
    }
  }

  void biot_notes(const ThermalModel& model);
  void energy_totals();

  const FiringInput& in_;
  FiringSystem s_;
  Stepper stepper_;
  Controller controller_;
  ScheduleState state_;
  FiringResult r_;
  Eigen::VectorXd T_, start_T_, rate_, next_rate_;
  double t_ = 0;
  std::vector<std::size_t> walls_, loads_;  // surfaces
  std::vector<bool> rising_;                // per segment opened: towards a higher target
};

// Lumped or not. Bi = h_r L / k at the schedule's highest target, h_r = 4 eps sigma T^3 (the
// radiative coefficient), L the half thickness of a lumped load (heated on both sides) or the
// thickness of a slab (its back insulated): Bi < 0.1 makes lumping accurate for any change
// (Incropera & DeWitt, sec. 5.2). On a ramp of rate r the inside lags the surface by about
// r L^2 / (2 alpha) once the heating is steady (Carslaw & Jaeger, sec. 3.3, a surface
// temperature rising at a constant rate); for a lumped load alpha = k A t / (m c), its density
// taken as m / (A t) over the surface's area A.
void Firing::biot_notes(const ThermalModel& model) {
  double top = in_.start_K, fastest = 0;
  for (const ScheduleSegment& g : in_.schedule)
    if (g.kind == ScheduleSegment::Kind::ramp)
      top = std::max(top, g.target), fastest = std::max(fastest, g.rate);
  for (std::size_t l = 0; l < loads_.size(); ++l) {
    const SurfaceMass* mass = nullptr;
    for (const auto& [name, m] : in_.surfaces)
      if (name == r_.load_names[l]) mass = &m;
    const bool slab = mass->kind == SurfaceMass::Kind::slab;
    const double t = slab ? mass->layers[0].thickness : mass->thickness;
    const double k = slab ? mass->layers[0].conductivity_at(top) : mass->conductivity;
    if (!(t > 0 && k > 0)) continue;
    const double L = slab ? t : t / 2;
    double area = 0;
    for (std::size_t n = 0; n < s_.nodes; ++n)
      if (s_.node_surface[n] == loads_[l]) area += s_.node_area[n];
    const double alpha = slab ? k / (mass->layers[0].density * mass->layers[0].specific_heat)
                              : k * area * t / (mass->mass * mass->specific_heat);
    const double lag = fastest * L * L / (2 * alpha);
    const double hr = 4 * model.emissivity[loads_[l]] * kStefanBoltzmann * top * top * top;
    const double Bi = hr * L / k;
    const std::string what =
        "load '" + r_.load_names[l] + "': Biot number h_r L / k = " + rounded("%.2g", Bi) + " at " +
        rounded("%.0f C", top - kZeroCelsius) + "; on the fastest ramp its inside lags " +
        "its surface by about " + rounded("%.2g K", lag);
    if (slab)
      r_.notes.push_back(what + " (conducted in 1-D, as given)");
    else if (Bi < 0.1 || lag < 2)
      r_.notes.push_back(what + ": lumping it holds");
    else
      r_.warnings.push_back(what + ": a lumped load hides that lag; give it as a slab");
  }
}

void Firing::energy_totals() {
  for (std::size_t u = 0; u < s_.unknowns.size(); ++u) {
    const Unknown& k = s_.unknowns[u];
    const double dE = k.capacity * (T_(Eigen::Index(u)) - start_T_(Eigen::Index(u)));
    if (k.store == Store::wall)
      r_.stored_walls_J += dE;
    else
      r_.stored_loads_J += dE;
  }
  r_.residual_J =
      r_.energy_in_J - r_.stored_loads_J - r_.stored_walls_J - r_.case_loss_J - r_.other_loss_J;
}

}  // namespace
}  // namespace transient

bool FiringInput::IsValid(std::string* error) const {
  auto fail = [&](const std::string& m) {
    if (error) *error = m;
    return false;
  };
  if (control.empty()) return fail("control names no surface");
  if (schedule.empty()) return fail("the schedule is empty");
  if (power_W && !(*power_W > 0 && std::isfinite(*power_W))) return fail("power must be > 0");
  if (!(start_K > 0 && start_K < 3000)) return fail("start must be between 0 K and 3000 K");
  for (const ScheduleSegment& g : schedule) {
    if (g.kind == ScheduleSegment::Kind::ramp && !(g.rate > 0 && std::isfinite(g.rate)))
      return fail("a ramp's rate must be > 0");
    if (g.kind != ScheduleSegment::Kind::hold && !(g.target > 0 && g.target < 3000))
      return fail("a target must be between 0 K and 3000 K");
    if (g.kind == ScheduleSegment::Kind::hold && !(g.duration > 0 && std::isfinite(g.duration)))
      return fail("a hold's duration must be > 0");
  }
  if (!(band_K > 0) || !(integral_s > 0)) return fail("band and integral time must be > 0");
  if (!(max_step_s > 0) || !(tolerance_K > 0)) return fail("max_step and tolerance must be > 0");
  if (cells_per_layer < 1 || cells_per_layer > 200) return fail("cells_per_layer: 1 to 200");
  for (const auto& [name, m] : surfaces) {
    if (m.kind == SurfaceMass::Kind::lumped && !(m.mass > 0 && m.specific_heat > 0))
      return fail("surface '" + name + "': mass and specific heat must be > 0");
    if (m.kind != SurfaceMass::Kind::lumped && m.layers.empty())
      return fail("surface '" + name + "': no layers");
    for (const WallLayer& l : m.layers)
      if (!(l.thickness > 0 && l.density > 0 && l.specific_heat > 0 &&
            (l.conductivity > 0 || !l.conductivity_table.empty())))
        return fail("surface '" + name +
                    "': each layer needs thickness, conductivity, density and specific heat > 0");
  }
  return true;
}

FiringResult run_firing(const ThermalModel& model, const FiringInput& input, const FiringOptions&) {
  transient::Firing firing(model, input);
  return firing.run();
}

}  // namespace hearthray
