// The benchmark furnace (invented geometry): a closed box furnace 4 x 3 x 2.5 m whose walls
// are tessellated in n x n cells, holding closed obstructions (billets and burner tiles),
// about 100k triangles at n = 64. Shared by the benchmark programs; not a test fixture.
#pragma once

#include <cmath>
#include <sstream>
#include <string>

#include "hearthray/geometry.hpp"
#include "hearthray/sampling.hpp"

namespace hearthray::bench {

struct ObjWriter {
  std::ostringstream out;
  std::size_t vertices = 0;
  std::size_t triangles = 0;
  std::size_t vertex(const Vec3& p) {
    out << "v " << p.x << ' ' << p.y << ' ' << p.z << '\n';
    return ++vertices;
  }
  void tri(std::size_t a, std::size_t b, std::size_t c) {
    out << "f " << a << ' ' << b << ' ' << c << '\n';
    ++triangles;
  }
  // A rectangle origin + s*u + t*v, n x m cells; front side along cross(u, v).
  void grid(const std::string& group, Vec3 origin, Vec3 u, Vec3 v, int n, int m) {
    out << "g " << group << '\n';
    const std::size_t base = vertices + 1;
    for (int j = 0; j <= m; ++j)
      for (int i = 0; i <= n; ++i) vertex(origin + u * (double(i) / n) + v * (double(j) / m));
    for (int j = 0; j < m; ++j)
      for (int i = 0; i < n; ++i) {
        const std::size_t a = base + j * (n + 1) + i, b = a + 1, c = a + n + 1, d = c + 1;
        tri(a, b, d);
        tri(a, d, c);
      }
  }
  // Axis-aligned box with outward normals, each face an n x n grid.
  void box(const std::string& group, Vec3 lo, Vec3 size, int n) {
    const Vec3 X{size.x, 0, 0}, Y{0, size.y, 0}, Z{0, 0, size.z};
    grid(group, lo, Y, X, n, n);      // bottom, normal -z
    grid(group, lo + Z, X, Y, n, n);  // top, +z
    grid(group, lo, X, Z, n, n);      // y = lo, normal -y
    grid(group, lo + Y, Z, X, n, n);  // y = hi, +y
    grid(group, lo, Z, Y, n, n);      // x = lo, -x
    grid(group, lo + X, Y, Z, n, n);  // x = hi, +x
  }
  // UV sphere with outward normals.
  void sphere(const std::string& group, Vec3 c, double r, int rings, int segments) {
    out << "g " << group << '\n';
    const std::size_t base = vertices + 1;
    for (int j = 0; j <= rings; ++j) {
      const double th = kPi * j / rings;
      for (int i = 0; i < segments; ++i) {
        const double ph = 2 * kPi * i / segments;
        vertex(c +
               Vec3{std::sin(th) * std::cos(ph), std::sin(th) * std::sin(ph), std::cos(th)} * r);
      }
    }
    for (int j = 0; j < rings; ++j)
      for (int i = 0; i < segments; ++i) {
        const std::size_t a = base + j * segments + i;
        const std::size_t b = base + j * segments + (i + 1) % segments;
        const std::size_t cc = a + segments, d = b + segments;
        if (j > 0) tri(a, cc, b);
        if (j < rings - 1) tri(b, cc, d);
      }
  }
};

// Wall cells per edge `n`; `with_roof` false leaves the top open.
inline std::string furnace_obj(bool with_roof, int n = 64) {
  ObjWriter w;
  const double L = 4, W = 3, H = 2.5;
  // Walls with normals pointing into the furnace.
  w.grid("hearth", {0, 0, 0}, {L, 0, 0}, {0, W, 0}, n, n);
  if (with_roof) w.grid("roof", {0, 0, H}, {0, W, 0}, {L, 0, 0}, n, n);
  w.grid("wall_south", {0, 0, 0}, {0, 0, H}, {L, 0, 0}, n, n);
  w.grid("wall_north", {0, W, 0}, {L, 0, 0}, {0, 0, H}, n, n);
  w.grid("wall_west", {0, 0, 0}, {0, W, 0}, {0, 0, H}, n, n);
  w.grid("wall_east", {L, 0, 0}, {0, 0, H}, {0, W, 0}, n, n);
  // Obstructions: a load of billets (boxes) and burner tiles (spheres).
  for (int i = 0; i < 4; ++i)
    w.box("billet_" + std::to_string(i), {0.6 + 0.8 * i, 1.0, 0.1}, {0.5, 1.0, 0.5}, 20);
  for (int i = 0; i < 6; ++i)
    w.sphere("tile_" + std::to_string(i), {0.7 + 0.55 * i, 2.4, 1.6}, 0.2, 36, 72);
  return w.out.str();
}

// The scene file of the benchmark furnace (mesh file furnace.obj beside it): patches of `size` (or
// "triangles"), `rays` per patch, invented conditions.
inline std::string furnace_toml(const std::string& size, std::uint64_t rays) {
  const std::string patches = size == "triangles" ? "\"triangles\"" : "\"" + size + " m\"";
  std::ostringstream out;
  out << "[mesh]\nfile = \"furnace.obj\"\n"
      << "[rays]\nper_patch = " << rays << "\nseed = 1\n"
      << "[defaults]\nemissivity = 0.85\nadiabatic = true\npatches = " << patches << "\n"
      << "[surface.roof]\ntemperature = \"1250 C\"\n"
      << "[surface.hearth]\nwall = { U = \"1.2 W/m2K\", outside = \"30 C\" }\n";
  for (const char* wall : {"wall_south", "wall_north", "wall_east", "wall_west"})
    out << "[surface." << wall << "]\nwall = { U = \"1.5 W/m2K\", outside = \"30 C\" }\n";
  for (int k = 0; k < 6; ++k) out << "[surface.tile_" << k << "]\npower = \"4 kW\"\n";
  return out.str();
}

}  // namespace hearthray::bench
