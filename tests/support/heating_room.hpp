// A small heated room for the goal-seek tests: a 4 x 3 x 2.5 m box (tests/support/meshes.hpp
// box_obj) whose roof is a radiant panel of given power, walls losing heat to 0 C, floor to a
// 5 C cellar, every film to the solved room air, 0.5 air changes per hour, a seated point and
// a 1 m grid. Our own invented case (no source), used by tests/test_heating_plan.cpp and
// validation/test_heating_plan_validation.cpp. Header-only, like scene_fixtures.hpp.
#pragma once

#include <string>

namespace hearthray::testing {

// `panel_power` as written in the scene file, e.g. "400 W"; `person`: PMV inputs in [comfort].
inline std::string heating_room_scene(const std::string& panel_power, bool room_air = true) {
  const std::string fluid = room_air ? "\"room_air\"" : "\"18 C\"";
  std::string s = R"(
[rays]
per_patch = 3000
seed = 3
[defaults]
emissivity = 0.9
adiabatic = true
convection = { h = "2.5 W/m2K", fluid = )" +
                  fluid + R"( }
wall = { U = "0.8 W/m2K", outside = "0 C" }
[surface.floor]
wall = { U = "0.5 W/m2K", outside = "5 C" }
[surface.roof]
emissivity = 0.95
power = ")" + panel_power +
                  R"("
wall = false
convection = { h = "1 W/m2K", fluid = )" +
                  fluid + R"( }
)";
  if (room_air) s += "[room_air]\nventilation = \"0.5 1/h\"\noutside = \"0 C\"\ngains = \"80 W\"\n";
  s += "[comfort]\n";
  if (!room_air) s += "air_temperature = \"18 C\"\n";
  s += R"(rays = 3000
metabolic_rate = "1.2 met"
clothing = "1.0 clo"
relative_humidity = "40 %"
[comfort.point.chair]
position = ["2.2 m", "1.4 m", "0.6 m"]
kind = "seated"
[comfort.grid]
height = "0.6 m"
spacing = "1 m"
margin = "0.5 m"
)";
  return s;
}

}  // namespace hearthray::testing
