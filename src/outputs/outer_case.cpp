// Outer case temperatures and touch hazards (see outer_case.hpp).
#include "hearthray/outer_case.hpp"

#include <algorithm>
#include <cmath>

#include "hearthray/units.hpp"

namespace hearthray {

AirProperties air_properties(double T) {
  // Sutherland: x = x0 (T / T0)^1.5 (T0 + S) / (T + S).
  auto sutherland = [T](double x0, double T0, double S) {
    return x0 * std::pow(T / T0, 1.5) * (T0 + S) / (T + S);
  };
  const double mu = sutherland(1.716e-5, 273.15, 110.4);  // Pa s
  const double k = sutherland(0.0241, 273.15, 194.0);     // W/(m K)
  constexpr double kGasConstant = 287.05;                 // J/(kg K), dry air
  constexpr double kAtmosphere = 101325;                  // Pa
  constexpr double kCp = 1007;                            // J/(kg K)
  const double rho = kAtmosphere / (kGasConstant * T);
  return {k, mu / rho, mu * kCp / k};
}

double natural_convection_h(double surface_K, double air_K, double height_m) {
  const double dT = std::abs(surface_K - air_K);
  if (dT == 0 || !(height_m > 0)) return 0;
  const double film = 0.5 * (surface_K + air_K);
  const AirProperties air = air_properties(film);
  constexpr double kGravity = 9.80665;  // m/s^2, standard gravity
  const double alpha = air.kinematic_viscosity / air.prandtl;
  const double rayleigh = kGravity * (1 / film) * dT * height_m * height_m * height_m /
                          (air.kinematic_viscosity * alpha);
  // Churchill & Chu (1975), eq. (4): Nu^(1/2) = 0.825 + 0.387 Ra^(1/6) / [1 +
  // (0.492/Pr)^(9/16)]^(8/27).
  const double root =
      0.825 + 0.387 * std::pow(rayleigh, 1.0 / 6.0) /
                  std::pow(1 + std::pow(0.492 / air.prandtl, 9.0 / 16.0), 8.0 / 27.0);
  return root * root * air.conductivity / height_m;
}

double outer_case_temperature(double flux_W_m2, double room_K, double height_m, double emissivity) {
  if (!(flux_W_m2 > 0)) return room_K;
  auto given_off = [&](double T) {
    return natural_convection_h(T, room_K, height_m) * (T - room_K) +
           emissivity * kStefanBoltzmann * (T * T * T * T - room_K * room_K * room_K * room_K);
  };
  // Radiation alone gives off at least 4 eps sigma T_room^3 (T - T_room): an upper bound.
  double lo = room_K;
  double hi = room_K + flux_W_m2 / (4 * emissivity * kStefanBoltzmann * std::pow(room_K, 3));
  for (int i = 0; i < 200 && hi - lo > 1e-9 * hi; ++i) {
    const double mid = 0.5 * (lo + hi);
    (given_off(mid) < flux_W_m2 ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

std::vector<OuterCase> outer_cases(const ThermalModel& model, const ExchangeResult& result,
                                   double height_m) {
  std::vector<OuterCase> out;
  std::vector<int> index(model.surface_names.size(), -1);
  for (std::size_t k = 0; k < result.nodes.size() && k < model.nodes.size(); ++k) {
    const NodeCondition& c = model.nodes[k].condition;
    const NodeResult& n = result.nodes[k];
    if (!c.wall_loss || !(n.wall_loss_W > 0) || !(n.area > 0)) continue;
    const std::uint32_t s = model.node_surface[k];
    if (index[s] < 0) {
      index[s] = int(out.size());
      out.push_back({model.surface_names[s], 0, c.wall_loss->outside_K, c.wall_loss->outside_K});
    }
    OuterCase& o = out[std::size_t(index[s])];
    o.flux_W_m2 = std::max(o.flux_W_m2, n.wall_loss_W / n.area);
  }
  for (OuterCase& o : out) {
    o.temperature_K = outer_case_temperature(o.flux_W_m2, o.room_K, height_m);
    o.convection_h = natural_convection_h(o.temperature_K, o.room_K, height_m);
    const double celsius = o.temperature_K - kZeroCelsius;
    o.hazard = celsius >= kBurnOnTouchC     ? TouchHazard::touch
               : celsius >= kBurnOnContactC ? TouchHazard::contact
                                            : TouchHazard::none;
  }
  return out;
}

std::string hazard_text(TouchHazard hazard) {
  switch (hazard) {
    case TouchHazard::touch:
      return "burns on a touch of about a second (ISO 13732-1: 65 C for bare metal, recalled)";
    case TouchHazard::contact:
      return "hot to touch: burns on contact of about ten minutes (ISO 13732-1: 48 C, recalled)";
    case TouchHazard::none:
      break;
  }
  return "";
}

}  // namespace hearthray
