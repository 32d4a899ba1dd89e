#include "support/gas_fixtures.hpp"

#include <algorithm>
#include <cstdio>
#include <stdexcept>

#include "support/meshes.hpp"

namespace hearthray::testing {

Scene keep_surfaces(const Scene& scene, const std::vector<std::string>& names) {
  Scene out;
  out.source = scene.source;
  out.vertices = scene.vertices;
  for (const std::string& name : names) {
    const int s = scene.find_surface(name);
    if (s < 0) throw std::invalid_argument("keep_surfaces: no surface " + name);
    Surface surface = scene.surfaces[s];
    surface.first_triangle = std::uint32_t(out.triangles.size());
    for (std::uint32_t t = 0; t < scene.surfaces[s].triangle_count; ++t) {
      Triangle tri = scene.triangles[scene.surfaces[s].first_triangle + t];
      tri.surface = std::uint32_t(out.surfaces.size());
      for (std::uint32_t v : tri.v) out.bounds.grow(scene.vertices[v]);
      out.triangles.push_back(tri);
    }
    out.surfaces.push_back(surface);
  }
  return out;
}

Scene gas_sphere(double r, int level) {
  Scene both = load_obj_text(concentric_spheres_obj(r / 4, r, level), "gas sphere");
  Scene wall = keep_surfaces(both, {"outer"});
  wall.surfaces[0].name = "wall";
  return wall;
}

std::string box_with_load_obj(double a, double b, double c, double x0, double y0, double z0,
                              double s) {
  std::string text = box_obj(a, b, c);
  // box_obj numbers its vertices from 1; count them to append the load's after them.
  int count = 0;
  for (std::size_t i = 0; i + 1 < text.size(); ++i)
    if ((i == 0 || text[i - 1] == '\n') && text[i] == 'v' && text[i + 1] == ' ') ++count;
  char line[160];
  for (int k = 0; k < 8; ++k) {
    std::snprintf(line, sizeof line, "v %.17g %.17g %.17g\n", x0 + s * (k & 1),
                  y0 + s * ((k >> 1) & 1), z0 + s * ((k >> 2) & 1));
    text += line;
  }
  // Corners k = x + 2 y + 4 z; each face CCW seen from outside the cube.
  const int faces[6][4] = {{0, 2, 3, 1}, {4, 5, 7, 6}, {0, 1, 5, 4},
                           {2, 6, 7, 3}, {0, 4, 6, 2}, {1, 3, 7, 5}};
  text += "g load\n";
  for (const auto& f : faces) {
    std::snprintf(line, sizeof line, "f %d %d %d\nf %d %d %d\n", count + 1 + f[0], count + 1 + f[1],
                  count + 1 + f[2], count + 1 + f[0], count + 1 + f[2], count + 1 + f[3]);
    text += line;
  }
  return text;
}

}  // namespace hearthray::testing
