// Scenes for the gas-zone tests: a gas-filled sphere, and a box furnace with a solid load.
#pragma once

#include <string>
#include <vector>

#include "hearthray/scene.hpp"

namespace hearthray::testing {

// The scene with only the named surfaces (their triangles, renumbered; bounds recomputed).
Scene keep_surfaces(const Scene& scene, const std::vector<std::string>& names);

// An icosphere of radius r (level subdivisions) with inward fronts: one surface "wall".
Scene gas_sphere(double r, int level);

// OBJ text: the box [0, a] x [0, b] x [0, c] with inward fronts (box_obj's six groups) and a
// solid cube "load" [x0, x0 + s] x [y0, y0 + s] x [z0, z0 + s] inside it with outward fronts.
std::string box_with_load_obj(double a, double b, double c, double x0, double y0, double z0,
                              double s);

}  // namespace hearthray::testing
