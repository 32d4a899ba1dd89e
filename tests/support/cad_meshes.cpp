#include "support/cad_meshes.hpp"

#include <array>
#include <cstdio>
#include <vector>

namespace hearthray::testing {
namespace {

using Point = std::array<double, 3>;

// One OBJ group holding one polygon per entry, each polygon with its own 'v' lines (the
// topology welds equal positions), counted back with negative indices.
void add_group(std::string* obj, const char* name, const std::vector<std::vector<Point>>& faces,
               double scale) {
  char line[160];
  std::snprintf(line, sizeof line, "g %s\n", name);
  *obj += line;
  for (const auto& face : faces) {
    for (const Point& p : face) {
      std::snprintf(line, sizeof line, "v %.17g %.17g %.17g\n", p[0] * scale, p[1] * scale,
                    p[2] * scale);
      *obj += line;
    }
    *obj += "f";
    for (std::size_t k = face.size(); k > 0; --k) *obj += " -" + std::to_string(k);
    *obj += "\n";
  }
}

// The six faces of the box [lo, hi], fronts facing out, as quads.
std::vector<std::vector<Point>> box_faces(const Point& lo, const Point& hi) {
  const double x0 = lo[0], y0 = lo[1], z0 = lo[2], x1 = hi[0], y1 = hi[1], z1 = hi[2];
  return {
      {{x0, y0, z0}, {x0, y1, z0}, {x1, y1, z0}, {x1, y0, z0}},  // bottom, -z
      {{x0, y0, z1}, {x1, y0, z1}, {x1, y1, z1}, {x0, y1, z1}},  // top, +z
      {{x0, y0, z0}, {x1, y0, z0}, {x1, y0, z1}, {x0, y0, z1}},  // y0, -y
      {{x0, y1, z0}, {x0, y1, z1}, {x1, y1, z1}, {x1, y1, z0}},  // y1, +y
      {{x0, y0, z0}, {x0, y0, z1}, {x0, y1, z1}, {x0, y1, z0}},  // x0, -x
      {{x1, y0, z0}, {x1, y1, z0}, {x1, y1, z1}, {x1, y0, z1}},  // x1, +x
  };
}

}  // namespace

std::string cad_furnace_obj(const CadFurnace& o) {
  std::string obj = "# CAD-style furnace chamber (invented test scenario), polygons as exported\n";
  const double s = o.scale;
  add_group(&obj, "hearth_left", {{{0, 0, 0}, {1, 0, 0}, {1, 1, 0}, {0, 1, 0}, {0, 0.5, 0}}}, s);
  add_group(&obj, "hearth_right", {{{1, 0, 0}, {2, 0, 0}, {2, 1, 0}, {1, 1, 0}}}, s);
  std::vector<Point> roof = {{0, 0, 1}, {0, 1, 1}, {2, 1, 1}, {2, 0, 1}};
  if (o.flip_roof) roof = {{0, 0, 1}, {2, 0, 1}, {2, 1, 1}, {0, 1, 1}};
  add_group(&obj, "roof", {roof}, s);
  add_group(&obj, "wall_front",
            {{{0, 0, 0}, {0, 0, 0.5}, {0, 0, 1}, {2, 0, 1}, {2, 0, 0}, {1, 0, 0}}}, s);
  add_group(&obj, "wall_back", {{{0, 1, 0}, {1, 1, 0}, {2, 1, 0}, {2, 1, 1}, {0, 1, 1}}}, s);
  add_group(&obj, "end_right", {{{2, 0, 0}, {2, 0, 1}, {2, 1, 1}, {2, 1, 0}}}, s);
  add_group(&obj, "end_left",
            {{{0, 0.5, 0}, {0, 1, 0}, {0, 1, 1}, {0, 0, 1}, {0, 0, 0.5}, {0, 0.5, 0.5}}}, s);
  if (o.door) add_group(&obj, "door", {{{0, 0, 0}, {0, 0.5, 0}, {0, 0.5, 0.5}, {0, 0, 0.5}}}, s);
  if (o.blocks) {
    add_group(&obj, "support_a", box_faces({1.2, 0.3, 0}, {1.3, 0.7, 0.1}), s);
    add_group(&obj, "support_b", box_faces({1.7, 0.3, 0}, {1.8, 0.7, 0.1}), s);
    add_group(&obj, "block", box_faces({1.15, 0.3, 0.1}, {1.85, 0.7, 0.4}), s);
  }
  if (o.sunk_block) add_group(&obj, "block", box_faces({1.3, 0.3, -0.05}, {1.7, 0.7, 0.25}), s);
  return obj;
}

}  // namespace hearthray::testing
