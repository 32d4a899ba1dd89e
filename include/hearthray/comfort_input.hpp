// The [comfort] table of a scene file: where people are and what the air is like, for the
// comfort figures of a heated room (include/hearthray/comfort.hpp).
//
//   [comfort]
//   air_temperature = "20 C"          # required (unless [room_air] solves it)
//   air_speed = "0.1 m/s"             # optional (default 0.1 m/s), at most 1 m/s
//   rays = 50_000                     # optional: rays per point for each estimator
//   metabolic_rate = "1.2 met"        # optional, all three together: PMV and PPD at every
//   clothing = "1.0 clo"              #   point (ISO 7730; hearthray/pmv.hpp); "W/m2" for
//   relative_humidity = "50 %"        #   the rate and "m2K/W" for clothing also taken
//   [comfort.point.desk]              # named points, any number
//   position = ["1.2 m", "2.0 m", "0.6 m"]   # x, y, z with units, in the mesh's frame
//   kind = "seated"                   # sphere (default) | seated | standing
//   [comfort.grid]                    # optional: points over the occupied zone
//   height = "0.6 m"                  # above the floor (the lowest point of the mesh)
//   spacing = "0.5 m"
//   margin = "0.5 m"                  # kept from the walls (the mesh's plan outline box)
//   kind = "sphere"
//
// The vertical axis is z. Every length carries its unit; unknown keys are errors naming the
// key and the line.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "hearthray/defaults.hpp"
#include "hearthray/geometry.hpp"

namespace hearthray {

// What stands at a comfort point: a small sphere (a globe thermometer, the ISO 7726 reference
// body), or a seated or standing person (angle factors weighted by the person's projected
// area, after Fanger).
enum class ComfortBody { sphere, seated, standing };

struct ComfortPointSpec {
  std::string name;
  Vec3 position;  // m
  ComfortBody body = ComfortBody::sphere;
  int line = 0;
};

struct ComfortGridSpec {
  double height = 0.6;   // m above the floor
  double spacing = 0.5;  // m
  double margin = 0.5;   // m from the walls
  ComfortBody body = ComfortBody::sphere;
  int line = 0;
};

// Activity, clothing and humidity for PMV and PPD (pmv.hpp), within ISO 7730's ranges.
struct PersonInput {
  double met = 1.2;
  double clo = 1.0;
  double relative_humidity = 0.5;  // 0..1
  int line = 0;
};

struct ComfortInput {
  double air_K = 293.15;
  double air_speed = 0.1;  // m/s
  std::uint64_t rays =
      kDefaultComfortRays;               // per point, for the body and for each of the six planes
  std::vector<ComfortPointSpec> points;  // in file order
  std::optional<ComfortGridSpec> grid;
  std::optional<PersonInput> person;  // PMV and PPD when given
  int line = 0;
};

std::string to_string(ComfortBody body);  // "sphere", "seated", "standing"

}  // namespace hearthray
