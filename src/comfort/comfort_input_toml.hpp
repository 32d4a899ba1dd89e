// Private: the [comfort] table reader, called by the scene-file reader (src/input/scene_file.cpp).
#pragma once

#include <toml++/toml.h>

#include <string>
#include <utility>
#include <vector>

#include "hearthray/comfort_input.hpp"
#include "hearthray/room_air.hpp"

namespace hearthray {

// Reads the [comfort] table `node` of the scene file `path`. Throws InputError naming the file,
// line and key on any problem.
// `air_solved`: the scene has [room_air], so air_temperature is solved, not given (refused).
ComfortInput read_comfort_table(const toml::node& node, const std::string& path,
                                bool air_solved = false);

// "0.5 1/h": a number, then one of `units` (spaces ignored), as the number times the unit's
// factor. False when the text is not a finite number followed by one of the units.
bool number_with_unit(const std::string& text,
                      const std::vector<std::pair<std::string, double>>& units, double* value);

// Reads the [room_air] table (room_air.hpp) the same way.
RoomAirInput read_room_air_table(const toml::node& node, const std::string& path);

}  // namespace hearthray
