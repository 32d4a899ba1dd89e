// The outer case of a wall that loses heat: how hot it gets, and whether it burns on touch.
//
// A `wall` condition gives the heat that leaves a surface through its wall. Outside, that heat
// leaves the case by natural convection to the room air and by radiation to the room; the
// case temperature T_c solves
//   q = h_c(T_c) (T_c - T_room) + eps sigma (T_c^4 - T_room^4),
// with h_c from the Churchill & Chu (1975) correlation for a vertical plate (all Rayleigh
// numbers; "Correlating equations for laminar and turbulent free convection from a vertical
// plate", Int. J. Heat Mass Transfer 18, 1323-1329, their eq. (4)), air properties at the film
// temperature, the room at the wall's `outside` temperature. The wall loss of the solve takes
// `outside` as the temperature behind the wall (no outside film), so its q is an upper bound
// and so is T_c: the case is at most this hot.
//
// Touch: ISO 13732-1 (Ergonomics of the thermal environment - methods for the assessment of
// human responses to contact with surfaces - Part 1: hot surfaces) gives burn thresholds by
// material and contact time. Values used here, recalled rather than read from the standard:
// 65 C for about 1 s of contact with bare metal, 48 C for contact of about 10 min with any
// material. Check them against the standard before relying on them.
#pragma once

#include <string>
#include <vector>

#include "hearthray/exchange.hpp"
#include "hearthray/thermal_model.hpp"

namespace hearthray {

// Dry air at 1 atm: Sutherland's laws for viscosity and conductivity (constants as in White,
// Viscous Fluid Flow, Table 1-2 and 1-3, recalled), ideal gas density, cp = 1007 J/(kg K)
// (Incropera & DeWitt, Table A.4 at 300 K, recalled). Good to a few per cent from 250 to 600 K.
struct AirProperties {
  double conductivity = 0;         // W/(m K)
  double kinematic_viscosity = 0;  // m^2/s
  double prandtl = 0;
};
AirProperties air_properties(double temperature_K);

// Mean natural-convection coefficient of a vertical plate of height `height_m` at `surface_K`
// in still air at `air_K` (Churchill & Chu 1975), W/(m^2 K); 0 when the two are equal.
double natural_convection_h(double surface_K, double air_K, double height_m);

inline constexpr double kBurnOnTouchC = 65;     // ISO 13732-1, bare metal, ~1 s (recalled)
inline constexpr double kBurnOnContactC = 48;   // ISO 13732-1, any material, ~10 min (recalled)
inline constexpr double kCaseEmissivity = 0.9;  // painted or oxidised steel (recalled, typical)

// The case temperature that gives off `flux_W_m2` (> 0) to a room at `room_K`.
double outer_case_temperature(double flux_W_m2, double room_K, double height_m,
                              double emissivity = kCaseEmissivity);

enum class TouchHazard { none, contact, touch };  // below 48 C, 48..65 C, 65 C and above

struct OuterCase {
  std::string surface;
  double flux_W_m2 = 0;      // the largest wall-loss flux of the surface's pieces
  double room_K = 0;         // the wall's `outside` temperature
  double temperature_K = 0;  // case temperature for that flux
  double convection_h = 0;   // W/(m^2 K), at that temperature
  TouchHazard hazard = TouchHazard::none;
};

// One entry per surface with a wall loss out of it, in scene order; `height_m` is the height of
// the case (the model's vertical extent).
std::vector<OuterCase> outer_cases(const ThermalModel& model, const ExchangeResult& result,
                                   double height_m);

// "burns on a touch of about a second (ISO 13732-1, 65 C for bare metal, recalled)", ... ; ""
// for none.
std::string hazard_text(TouchHazard hazard);

}  // namespace hearthray
