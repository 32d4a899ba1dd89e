// The room air as part of the heat balance: one well-mixed air node whose temperature is solved
// instead of given. The scene file's [room_air] table says how air leaves and enters the room
// and what heat is released into it; every surface whose convection names fluid = "room_air"
// exchanges heat with that node.
//
//   [room_air]
//   ventilation = "0.5 1/h"     # air changes per hour (1/h), or a flow: "30 m3/h", "8 L/s",
//                               # "0.01 m3/s"; outside air comes in, room air leaves
//   outside = "-5 C"            # temperature of the air that comes in
//   gains = "150 W"             # optional: people, lights, appliances (default 0 W)
//   volume = "54 m3"            # optional: the room's volume for air changes per hour
//                               # (default: the volume the one-sided surfaces enclose)
//   density = "1.2 kg/m3"       # optional, of the air that comes in (default 1.2 kg/m3)
//   heat_capacity = "1005 J/kgK"  # optional, at constant pressure (default 1005 J/(kg K))
//
// The air's balance (steady, well mixed; heat into the air positive):
//   sum_i h_i A_i (T_i - T_a) + Q_gains = rho c_p V' (T_a - T_out)
// with V' the volume flow (air changes per hour x volume / 3600 s). Default density and heat
// capacity: 1.2 kg/m3 and 1005 J/(kg K), the round values ventilation sizing commonly uses for
// room air near 20 C (common practice; Incropera et al., Fundamentals of Heat and Mass
// Transfer, Table A.4, gives 1.1614 kg/m3 and 1.007 kJ/(kg K) for air at 300 K, recalled).
//
// Method: the surface temperatures follow T_a almost linearly (radiation is the only
// non-linear term), so the air balance residual R(T_a) is a smooth, strictly decreasing
// function of T_a. It is solved by the secant method on T_a, each evaluation one exchange
// solve of the thermal model with its room-air films at T_a (the view factors are not
// traced again); a bracket kept from the residuals' signs guards the steps (a secant step
// that would leave it bisects it instead).
#pragma once

#include <optional>
#include <string>

#include "hearthray/exchange.hpp"

namespace hearthray {

struct ThermalModel;

enum class VentilationKind { air_changes_per_hour, volume_flow };

struct RoomAirInput {
  VentilationKind ventilation_kind = VentilationKind::air_changes_per_hour;
  double ventilation = 0;           // 1/h, or m^3/s
  double outside_K = 273.15;        // incoming air
  double gains_W = 0;               // released into the air
  std::optional<double> volume_m3;  // room volume (else from the mesh)
  double density = 1.2;             // kg/m^3
  double heat_capacity = 1005;      // J/(kg K)
  int line = 0;                     // of the table in the scene file
};

struct RoomAirResult {
  bool converged = false;
  int iterations = 0;          // exchange solves
  double air_K = 0;            // solved air temperature
  double volume_m3 = 0;        // used for air changes per hour (0 when a flow is given)
  double flow_m3_s = 0;        // volume flow of outside air
  double conductance_W_K = 0;  // rho c_p V'
  double ventilation_W = 0;    // carried out by the air: rho c_p V' (T_a - T_out)
  double convection_W = 0;     // from the room-air surfaces into the air
  double gains_W = 0;
  double residual_W = 0;  // convection + gains - ventilation at the answer
  std::string message;    // why not converged
};

// Volume flow (m^3/s) of the input, with `volume_m3` for air changes per hour.
double ventilation_flow(const RoomAirInput& input, double volume_m3);

// Solves the air temperature of `model`'s room-air films (Convection::fluid_is_room_air) and
// the exchange with it; on return the model's room-air films are at the solved temperature
// and `result` is the exchange at it. Throws InputError when no surface convects to the room
// air; an exchange that does not converge, or a balance that does not close in 60 solves, is
// reported by the returned result (converged = false, with a message).
RoomAirResult solve_room_air(ThermalModel* model, const RoomAirInput& input, double volume_m3,
                             const ExchangeOptions& options, ExchangeResult* result);

}  // namespace hearthray
