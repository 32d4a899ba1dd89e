// The zone solve: gray diffuse surfaces and radiating gas zones together (the zone method of
// Hottel & Sarofim, Radiative Transfer, 1967; Modest, Radiative Heat Transfer, zonal method),
// with the gas as a weighted sum of gray gases.
//
// For each gray gas g, with direct exchange areas S^g (gas_zones.hpp) and emission shares
// a_g(T) taken at the emitter's temperature, E^g(T) = a_g(T) sigma T^4:
//   radiosity of patch i:  A_i J_i = eps_i A_i E_i + rho_i A_i H_i,
//   irradiation:           A_i H_i = sum_j S_ij J_j + sum_z S_iz E_z + L_i E_sur,
// L_i the exchange area lost to the surroundings (0 in a closed enclosure). Net radiation
// leaving patch i: Q_i = sum_g eps_i (A_i E_i - A_i H_i). Zone z absorbs
// sum_g (sum_j S_zj J_j + sum_y S_zy E_y + L_z E_sur) and emits sum_g 4 k_g V_z E_z.
// Convection: a patch's film exchanges h A (T_z - T_i) with the zone beside it (gas_run.cpp
// takes the zone that holds a point just in front of the patch's centroid).
// Zone energy: release + enthalpy in - enthalpy out + absorbed - emitted - convection to its
// patches = 0, where products
// flow zone to zone in a given order (plug flow; one zone is a well-stirred furnace), the first
// zone receiving the combustion air.
//
// Unknown temperatures (patches with a given power, zones with a given release) are found by
// Newton's method with the exact Jacobian: for each gray gas the radiosity matrix
// diag(A) - diag(rho) S_ss is factored once; dJ/dT follows from the same factors, and
// d a_g/dT and the products' heat capacity enter exactly. Dense: for a few thousand patches.
//
// On sparse exchange areas (GasStorage::sparse) the same equations are solved at a cost that
// grows with the non-zeros: each radiosity system (diagonally dominant: rows of S_ss sum to at
// most A) by GMRES with a diagonal preconditioner, and each Newton step by GMRES on
// Jacobian-vector products (matrix-free: one radiosity solve per gray gas per product, the
// exact derivative), preconditioned by an estimate of the Jacobian's diagonal
// (zone_solve_large.cpp). Results agree with the dense path to the solver tolerances.
#pragma once

#include <string>
#include <vector>

#include "hearthray/combustion.hpp"
#include "hearthray/gas_properties.hpp"
#include "hearthray/gas_zones.hpp"

namespace hearthray {

struct ZonePatchCondition {
  double emissivity = 0.8;  // (0, 1]
  bool known_temperature = true;
  double temperature = 293.15;  // K, when known (>= 0); the start value otherwise
  double power = 0;             // W put in when the temperature is unknown (0: adiabatic)
  // Conduction through the wall to the outside, as U A (T - T_outside) lost (unknown
  // temperature only; U = 0: none).
  double wall_U = 0;               // W/(m^2 K)
  double outside_temperature = 0;  // K
  // Convection from the gas zone beside the patch, h A (T_zone - T_patch) into the patch
  // (h = 0 or no zone: none).
  double convection_h = 0;   // W/(m^2 K)
  int convection_zone = -1;  // the zone the patch's film touches
};

struct ZoneGasCondition {
  bool known_temperature = false;
  double temperature = 1500;  // K, when known (> 0); the start value otherwise
  double heat_release = 0;    // W released in the zone (unknown temperature only)
};

struct ZoneSolveInput {
  const GasExchange* exchange = nullptr;     // smoothed exchange areas
  const GrayGasSet* gases = nullptr;         // its absorption coefficients must match
  std::vector<ZonePatchCondition> patches;   // one per patch
  std::vector<ZoneGasCondition> zones;       // one per zone
  double surroundings_temperature = 293.15;  // K, seen through lost exchange area
  // Flow of combustion products: zones in flow order, the first receiving the air, the last
  // leaving to the flue. Empty: no flow (zones exchange by radiation only).
  std::vector<std::size_t> flow_order;
  const Combustion* combustion = nullptr;  // needed when flow_order is not empty
  double tolerance = 1e-11;                // on the largest residual / heat scale
  int max_iterations = 100;

  bool IsValid(std::string* error) const;
};

struct ZonePatchResult {
  double temperature = 0;    // K
  double emitted = 0;        // W: eps A sigma T^4 summed over gray gases
  double absorbed = 0;       // W
  double net_out = 0;        // W: emitted - absorbed (negative: the patch takes heat)
  double wall_loss = 0;      // W through the wall to the outside
  double convection_in = 0;  // W from the gas by convection
};

struct ZoneGasResult {
  double temperature = 0;     // K
  double heat_release = 0;    // W
  double emitted = 0;         // W: sum_g 4 k_g V a_g sigma T^4
  double absorbed = 0;        // W
  double enthalpy_in = 0;     // W above 25 C (air or the upstream zone's products)
  double enthalpy_out = 0;    // W above 25 C
  double convection_out = 0;  // W to the patches beside the zone by convection
  // Heat the zone needs to hold a known temperature (release + in - out + absorbed -
  // emitted, negated): 0 for zones whose temperature was solved.
  double imbalance = 0;
};

struct ZoneSolveResult {
  bool converged = false;
  int iterations = 0;
  // The sparse path (exchange areas stored sparse): GMRES iterations of all Newton steps,
  // and the relative residual of the last step's linear solve.
  bool iterative = false;
  int linear_iterations = 0;
  double linear_residual = 0;
  double max_residual = 0;  // W, largest energy-equation residual at the end
  std::string message;
  std::vector<ZonePatchResult> patches;
  std::vector<ZoneGasResult> zones;
  double to_surroundings = 0;   // W: net radiation lost through the lost exchange area
  double heat_released = 0;     // W: sum of the zones' releases
  double air_enthalpy_in = 0;   // W above 25 C, into the first zone of the flow
  double flue_enthalpy = 0;     // W above 25 C, out of the last zone
  double flue_temperature = 0;  // K
  // Energy balance, the difference of release + air enthalpy in + what held zones need
  // = heat the patches take (convection_in - net_out: for patches of unknown temperature the
  // wall loss less the power put in) + surroundings + flue enthalpy, W (round-off when
  // converged).
  double balance_error = 0;
};

// Throws InputError for invalid input; numerical non-convergence is reported in the result.
ZoneSolveResult solve_zones(const ZoneSolveInput& input);

}  // namespace hearthray
