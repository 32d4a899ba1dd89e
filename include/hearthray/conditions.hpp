// Thermal conditions of a surface: what fixes its heat balance (a temperature, a heat flux, a
// power, or none), with convection to a fluid and conduction through the wall. Shared by the
// scene file that states them, the thermal model that applies them and the exchange solve.
#pragma once

#include <optional>
#include <string>
#include <vector>

namespace hearthray {

enum class ConditionKind {
  temperature,  // value: K
  heat_flux,    // value: W/m^2 put in, per m^2 of all faces of the node (both sides of a
                //   two-sided sheet), so the power put in is value * sum of its faces' areas
  power,        // value: W put in
  adiabatic     // no heat put in (a reradiating surface when it has no convection/wall loss)
};

struct Convection {
  double h = 0;        // W/(m^2 K)
  double fluid_K = 0;  // K (unused when the fluid is the gas)
  // In a scene with a radiating gas: the fluid is the gas zone beside the surface, whose
  // temperature is solved (scene file: fluid = "gas").
  bool fluid_is_gas = false;
  // In a scene with [room_air]: the fluid is the room air, whose temperature is solved from
  // its heat balance (scene file: fluid = "room_air"; see room_air.hpp). fluid_K holds the
  // air temperature of the latest solve.
  bool fluid_is_room_air = false;
};

// Conduction through the wall to an outside temperature, as an overall coefficient
// (U = k / thickness for a plain wall).
struct WallLoss {
  double U = 0;          // W/(m^2 K)
  double outside_K = 0;  // K
};

struct NodeCondition {
  ConditionKind kind = ConditionKind::adiabatic;
  double value = 0;
  std::optional<Convection> convection;
  std::optional<WallLoss> wall_loss;
};

// The thermal description of one surface, resolved from the scene file (surface over
// [defaults]).
struct SurfaceThermal {
  double emissivity = 1;
  NodeCondition condition;
};

// What the thermal model needs of a scene file besides the scene.
struct ThermalInput {
  std::vector<SurfaceThermal> surfaces;  // per surface of the scene, in its order
  std::optional<double> surroundings_K;  // [surroundings] temperature
  std::string source;                    // the scene file (or bare mesh), named in messages
};

}  // namespace hearthray
