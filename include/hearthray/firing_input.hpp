// The input of a firing (see firing.hpp): the schedule, the controller and the heat capacity
// of walls and loads, as the scene file's [firing] table gives them. SI units.
#pragma once

#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace hearthray {

struct WallLayer {
  double thickness = 0;      // m
  double conductivity = 0;   // W/(m K), used when the table is empty
  double density = 0;        // kg/m^3
  double specific_heat = 0;  // J/(kg K)
  // Conductivity against temperature (K, W/(m K)), rising in K; linear between points, held
  // at the ends.
  std::vector<std::pair<double, double>> conductivity_table;
  double conductivity_at(double T) const;
};

// The outer face of a wall: a film to the room.
struct OuterFilm {
  double room_K = 298.15;
  double h = 5;             // W/(m^2 K) natural convection
  double emissivity = 0.8;  // of the case, to the room
};

struct SurfaceMass {
  enum class Kind { wall, lumped, slab };
  Kind kind = Kind::lumped;
  std::vector<WallLayer> layers;  // wall; slab: one layer, its back insulated
  OuterFilm outside;              // wall
  double mass = 0;                // lumped, kg (of the whole surface)
  double specific_heat = 0;       // lumped, J/(kg K)
  // Lumped: optional size and conductivity for the Biot number (0: not given).
  double thickness = 0, conductivity = 0;
};

struct ScheduleSegment {
  enum class Kind { ramp, hold, cool };
  Kind kind = Kind::ramp;
  double rate = 0;      // ramp: K/s (> 0; the direction is towards the target)
  double target = 0;    // ramp and cool: K
  double duration = 0;  // hold: s
};

struct FiringInput {
  std::string control;            // surface whose temperature the controller reads
  std::optional<double> power_W;  // installed; default: the sum the scene gives heaters
  double start_K = 293.15;        // everything starts here
  std::vector<ScheduleSegment> schedule;
  std::vector<std::pair<std::string, SurfaceMass>> surfaces;  // by surface name
  double band_K = 20;               // proportional band: full power this far below
  double integral_s = 900;          // integral time
  double max_step_s = 60;           // longest time step (the controller samples each step)
  double tolerance_K = 0.5;         // local error per step
  int cells_per_layer = 6;          // finite volumes per wall layer
  double lag_limit_K = 10;          // a segment lagging more than this is reported
  std::optional<double> hours_max;  // stop (reported) after this long; default 200 h

  bool IsValid(std::string* error) const;
};

}  // namespace hearthray
