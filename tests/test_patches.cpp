// Patches: cutting surfaces for patches of a size (grids on rectangles, bands and sectors on
// cylinders, compact regions elsewhere), per-triangle patches, ray budgets. The shapes are
// checked against elementary geometry: a cell of an a x b rectangle cut into nu x nv equal
// cells is a rectangle of (a / nu) x (b / nv); a band of a cylinder of height H cut into n
// bands has height H / n (common practice, no source needed).
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <functional>
#include <map>
#include <set>
#include <sstream>
#include <tuple>

#include "hearthray/patches.hpp"
#include "hearthray/tracer.hpp"
#include "hearthray/units.hpp"
#include "hearthray/view_factors.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

std::string obj_vertex(const Vec3& p) {
  std::ostringstream out;
  out.precision(17);
  out << "v " << p.x << " " << p.y << " " << p.z << "\n";
  return out.str();
}

// A rectangle origin + s u + t v (s, t in [0, 1]) as a fan from an inner point to twelve
// points on its edge at uneven spacing: an irregular triangulation, front along u x v.
std::string fan_rectangle_obj(const Vec3& origin, const Vec3& u, const Vec3& v) {
  const double edge[][2] = {{0, 0}, {0.31, 0}, {0.77, 0}, {1, 0}, {1, 0.18}, {1, 0.64},
                            {1, 1}, {0.58, 1}, {0.12, 1}, {0, 1}, {0, 0.71}, {0, 0.22}};
  std::string text = "g plate\n" + obj_vertex(origin + u * 0.37 + v * 0.41);
  for (const auto& st : edge) text += obj_vertex(origin + u * st[0] + v * st[1]);
  for (int k = 0; k < 12; ++k)
    text += "f 1 " + std::to_string(2 + k) + " " + std::to_string(2 + (k + 1) % 12) + "\n";
  return text;
}

// A closed cylinder about the z axis, radius r, height h, `segments` quads round, outward
// normals, caps as one polygon each (the loader cuts them into triangles); surfaces "side"
// and "caps".
std::string cylinder_obj(double r, double h, int segments) {
  std::string text;
  for (int z = 0; z < 2; ++z)
    for (int i = 0; i < segments; ++i) {
      const double a = 2 * kPi * i / segments;
      text += obj_vertex({r * std::cos(a), r * std::sin(a), z * h});
    }
  text += "g side\n";
  for (int i = 0; i < segments; ++i) {
    const int j = (i + 1) % segments;
    text += "f " + std::to_string(1 + i) + " " + std::to_string(1 + j) + " " +
            std::to_string(1 + segments + j) + " " + std::to_string(1 + segments + i) + "\n";
  }
  text += "g caps\nf";
  for (int i = segments - 1; i >= 0; --i) text += " " + std::to_string(1 + i);
  text += "\nf";
  for (int i = 0; i < segments; ++i) text += " " + std::to_string(1 + segments + i);
  return text + "\n";
}

Vec3 centroid(const Scene& scene, std::uint32_t t) {
  const Triangle& tri = scene.triangles[t];
  return (scene.vertices[tri.v[0]] + scene.vertices[tri.v[1]] + scene.vertices[tri.v[2]]) / 3.0;
}

struct Cut {
  Scene scene;
  PatchSet patches;
};

Cut cut(const Scene& scene, const std::vector<PatchSpec>& specs) {
  Cut c;
  c.scene = subdivide(scene, specs);
  c.patches = make_patches(c.scene, specs);
  return c;
}

// Every triangle of surfaces with a front belongs to exactly one front patch, the patch's
// triangle list holds it once, and each surface's patch areas add up to the surface's area.
void check_partition(const Cut& c) {
  std::vector<int> listed(c.scene.triangles.size(), 0);
  for (std::size_t p = 0; p < c.patches.size(); ++p) {
    if (c.patches.patches[p].side != Side::front) continue;
    for (std::uint32_t k = c.patches.triangle_offset[p]; k < c.patches.triangle_offset[p + 1];
         ++k) {
      const std::uint32_t t = c.patches.triangle_index[k];
      ++listed[t];
      CHECK(c.patches.front_patch_of_triangle[t] == p);
    }
  }
  for (int n : listed) CHECK(n == 1);
  for (std::uint32_t s = 0; s < c.scene.surfaces.size(); ++s) {
    double area = 0;
    for (const Patch& p : c.patches.patches)
      if (p.surface == s && p.side == Side::front) area += p.area;
    CHECK(area == Approx(c.scene.surfaces[s].area).epsilon(1e-12));
  }
}

// The range of dot(d, x) over the vertices of patch p's triangles.
std::pair<double, double> patch_range(const Cut& c, std::size_t p, const Vec3& d) {
  double lo = INFINITY, hi = -INFINITY;
  for (std::uint32_t k = c.patches.triangle_offset[p]; k < c.patches.triangle_offset[p + 1]; ++k)
    for (std::uint32_t v : c.scene.triangles[c.patches.triangle_index[k]].v) {
      lo = std::min(lo, dot(d, c.scene.vertices[v]));
      hi = std::max(hi, dot(d, c.scene.vertices[v]));
    }
  return {lo, hi};
}

// Every patch of surface s is a rectangle along u and v of width a / nu and height b / nv: it
// fills the box its triangles span along u and v, and the box has the cell's size.
void check_cells(const Cut& c, std::uint32_t s, const Vec3& u, const Vec3& v, double a, double b,
                 int nu, int nv) {
  int cells = 0;
  for (std::size_t p = 0; p < c.patches.size(); ++p) {
    if (c.patches.patches[p].surface != s || c.patches.patches[p].side != Side::front) continue;
    ++cells;
    const auto [u0, u1] = patch_range(c, p, u);
    const auto [v0, v1] = patch_range(c, p, v);
    INFO("patch " << c.patches.patches[p].name);
    CHECK(u1 - u0 == Approx(a / nu).epsilon(1e-9));
    CHECK(v1 - v0 == Approx(b / nv).epsilon(1e-9));
    CHECK(c.patches.patches[p].area == Approx((u1 - u0) * (v1 - v0)).epsilon(1e-9));
  }
  CHECK(cells == nu * nv);
}

}  // namespace

TEST_CASE("a cube's faces are cut along grids and the mesh stays closed", "[patches]") {
  const Scene cube = load_obj_text(unit_cube_obj(), "cube");
  REQUIRE(analyse_topology(cube).closed);
  std::vector<PatchSpec> specs(cube.surfaces.size(), {PatchSpec::Mode::size, 0.3});
  specs[0] = {};  // the first face stays whole; its neighbours' cuts add vertices to its edges
  const Cut c = cut(cube, specs);
  check_partition(c);
  CHECK(c.patches.size() == 1 + 5 * 9);  // round(1 / 0.3) = 3 cells each way
  for (std::uint32_t s = 1; s < c.scene.surfaces.size(); ++s) {
    const Vec3 n = cube.normal(cube.surfaces[s].first_triangle);
    const Vec3 u = std::fabs(n.x) > 0.5 ? Vec3{0, 1, 0} : Vec3{1, 0, 0};
    check_cells(c, s, u, cross(n, u), 1, 1, 3, 3);
    for (std::uint32_t t = c.scene.surfaces[s].first_triangle;
         t < c.scene.surfaces[s].first_triangle + c.scene.surfaces[s].triangle_count; ++t)
      CHECK(dot(c.scene.normal(t), n) == Approx(1.0).margin(1e-12));
  }
  // Splitting an edge in every triangle that shares it leaves no T-junction: still closed.
  const MeshTopology topology = analyse_topology(c.scene);
  CHECK(topology.closed);
  CHECK(topology.boundary_edges == 0);
}

TEST_CASE("cells of a tilted rectangle are equal rectangles along its edges", "[patches]") {
  // 1.3 x 0.55 m, turned 30 degrees about z and tilted 20 degrees, triangulated as an uneven
  // fan; patches of 0.25 m: round(5.2) = 5 by round(2.2) = 2 cells of 0.26 x 0.275 m.
  const double a = 1.3, b = 0.55, turn = 30 * kPi / 180, tilt = 20 * kPi / 180;
  const Vec3 u{std::cos(turn), std::sin(turn), 0};
  const Vec3 v =
      Vec3{-std::sin(turn) * std::cos(tilt), std::cos(turn) * std::cos(tilt), std::sin(tilt)};
  const Scene plate = load_obj_text(fan_rectangle_obj({0.2, -0.1, 0.4}, u * a, v * b), "plate");
  const std::vector<PatchSpec> specs{{PatchSpec::Mode::size, 0.25}};
  const Cut c = cut(plate, specs);
  check_partition(c);
  check_cells(c, 0, u, v, a, b, 5, 2);
  CHECK(c.patches.patches[0].name == "plate#1");
}

TEST_CASE("every face of a box gets its own grid of equal cells", "[patches]") {
  const double a = 2, b = 3, h = 4;  // faces meshed as 3 x 3 quads; patches of 0.7 m
  const Scene box = load_obj_text(box_obj(a, b, h, 3), "box");
  const std::vector<PatchSpec> specs(box.surfaces.size(), {PatchSpec::Mode::size, 0.7});
  const Cut c = cut(box, specs);
  check_partition(c);
  CHECK(analyse_topology(c.scene).closed);
  const Vec3 x{1, 0, 0}, y{0, 1, 0}, z{0, 0, 1};
  // round(2 / 0.7) = 3, round(3 / 0.7) = 4, round(4 / 0.7) = 6 cells along each edge.
  check_cells(c, std::uint32_t(c.scene.find_surface("floor")), x, y, a, b, 3, 4);
  check_cells(c, std::uint32_t(c.scene.find_surface("roof")), x, y, a, b, 3, 4);
  check_cells(c, std::uint32_t(c.scene.find_surface("south")), x, z, a, h, 3, 6);
  check_cells(c, std::uint32_t(c.scene.find_surface("west")), y, z, b, h, 4, 6);
}

TEST_CASE("a cylinder is cut into bands of one height and sectors of whole facets", "[patches]") {
  // Radius 0.25 m, height 1 m, 24 facets; patches of 0.25 m: round(1 / 0.25) = 4 bands and
  // round(2 pi 0.25 cos(7.5 deg) / 0.25) = round(6.23) = 6 sectors of 4 facets.
  const int segments = 24;
  const Scene cyl = load_obj_text(cylinder_obj(0.25, 1.0, segments), "cylinder");
  const std::vector<PatchSpec> specs(cyl.surfaces.size(), {PatchSpec::Mode::size, 0.25});
  const Cut c = cut(cyl, specs);
  check_partition(c);
  CHECK(analyse_topology(c.scene).closed);
  const std::uint32_t side = std::uint32_t(c.scene.find_surface("side"));
  int count = 0;
  for (std::size_t p = 0; p < c.patches.size(); ++p) {
    if (c.patches.patches[p].surface != side) continue;
    ++count;
    INFO("patch " << c.patches.patches[p].name);
    const auto [z0, z1] = patch_range(c, p, {0, 0, 1});
    CHECK(z1 - z0 == Approx(0.25).epsilon(1e-9));
    CHECK(std::fabs(z0 / 0.25 - std::round(z0 / 0.25)) < 1e-9);
    CHECK(c.patches.patches[p].area == Approx(c.scene.surfaces[side].area / 24).epsilon(1e-9));
    // Whole facets: four distinct normal directions, each facet's whole band height.
    std::set<long> facets;
    for (std::uint32_t k = c.patches.triangle_offset[p]; k < c.patches.triangle_offset[p + 1];
         ++k) {
      const Vec3 n = c.scene.normal(c.patches.triangle_index[k]);
      facets.insert(std::lround(std::atan2(n.y, n.x) / (2 * kPi / segments) * 2));
    }
    CHECK(facets.size() == 4);
  }
  CHECK(count == 4 * 6);
  // Caps: 24-gons of radius 0.25 m, whose extent along an edge is 2 x 0.25 x cos(7.5 deg)
  // = 0.496 m: round(1.98) = 2 x 2 grid cells clipped to each, through its centre; a 24-gon
  // turned by 90 degrees is itself, so each cell holds a quarter of it (elementary geometry).
  const std::uint32_t caps = std::uint32_t(c.scene.find_surface("caps"));
  int quarters = 0;
  for (const Patch& p : c.patches.patches) {
    if (p.surface != caps) continue;
    ++quarters;
    CHECK(p.area == Approx(c.scene.surfaces[caps].area / 8).epsilon(1e-9));
  }
  CHECK(quarters == 8);
}

TEST_CASE("a cylinder whose facets do not split into the sectors asked for gets equal sectors",
          "[patches]") {
  // Radius 0.25 m, 20 facets (apothem 0.25 cos 9 deg = 0.2469 m), patches of 0.25 m:
  // round(2 pi 0.2469 / 0.25) = round(6.2) = 6 sectors would hold 3 or 4 facets; 5, the
  // divisor of 20 nearest 6.2, holds 4 each: 4 bands x 5 sectors of one area.
  const Scene cyl = load_obj_text(cylinder_obj(0.25, 1.0, 20), "cylinder");
  const std::vector<PatchSpec> specs(cyl.surfaces.size(), {PatchSpec::Mode::size, 0.25});
  const Cut c = cut(cyl, specs);
  check_partition(c);
  const std::uint32_t side = std::uint32_t(c.scene.find_surface("side"));
  int count = 0;
  for (const Patch& p : c.patches.patches) {
    if (p.surface != side) continue;
    ++count;
    CHECK(p.area == Approx(c.scene.surfaces[side].area / 20).epsilon(1e-9));
  }
  CHECK(count == 20);
}

TEST_CASE("the caps of a thin post join the bands they close", "[patches]") {
  // A post of radius 0.05 m and height 0.5 m, side and caps one surface, patches of 0.25 m:
  // round(0.5 / 0.25) = 2 bands of one sector (round(2 pi 0.048 / 0.25) = 1); each cap
  // (0.0075 m^2) is under a quarter of a patch (0.0156 m^2) and joins the band it touches:
  // two patches, each half the side and one cap, the lower reaching from z = 0 to 0.25 m.
  std::string obj = cylinder_obj(0.05, 0.5, 12);
  obj.erase(obj.find("g caps\n"), 7);
  const Scene post = load_obj_text(obj, "post");
  REQUIRE(post.surfaces.size() == 1);
  const std::vector<PatchSpec> specs{{PatchSpec::Mode::size, 0.25}};
  const Cut c = cut(post, specs);
  check_partition(c);
  REQUIRE(c.patches.size() == 2);
  const double cap = 0.5 * 12 * 0.05 * 0.05 * std::sin(2 * kPi / 12);  // a regular 12-gon
  const double side = c.scene.surfaces[0].area - 2 * cap;
  for (std::size_t p = 0; p < 2; ++p) {
    CHECK(c.patches.patches[p].area == Approx(side / 2 + cap).epsilon(1e-9));
    const auto [z0, z1] = patch_range(c, p, {0, 0, 1});
    CHECK(z1 - z0 == Approx(0.25).epsilon(1e-9));
  }
}

// Checks that every patch of surface s is connected over shared edges and compact: its polar
// moment about its centroid over its area squared, I / A^2, is 1 / 6 for a square and
// 1 / (2 pi) for a disc; a 4 : 1 strip has 0.35. Every region must be under 0.3. Returns the
// number of patches.
int check_regions(const Cut& c, std::uint32_t s) {
  int count = 0;
  for (std::size_t p = 0; p < c.patches.size(); ++p) {
    if (c.patches.patches[p].surface != s) continue;
    ++count;
    std::vector<std::uint32_t> tris(
        c.patches.triangle_index.begin() + c.patches.triangle_offset[p],
        c.patches.triangle_index.begin() + c.patches.triangle_offset[p + 1]);
    Vec3 moment;
    double area = 0;
    for (std::uint32_t t : tris) {
      moment += centroid(c.scene, t) * c.scene.triangle_area(t);
      area += c.scene.triangle_area(t);
    }
    const Vec3 centre = moment / area;
    double polar = 0;
    for (std::uint32_t t : tris) {
      const Vec3 m = centroid(c.scene, t);
      polar += c.scene.triangle_area(t) * dot(m - centre, m - centre);
    }
    INFO("patch " << c.patches.patches[p].name << ", " << tris.size() << " triangles");
    CHECK(polar / (area * area) < 0.3);
    // Connected: growing over triangles that share an edge (two vertex positions) from the
    // first triangle reaches all.
    std::map<std::pair<std::tuple<double, double, double>, std::tuple<double, double, double>>,
             std::vector<std::size_t>>
        edges;
    auto pos = [&](std::uint32_t v) {
      const Vec3& x = c.scene.vertices[v];
      return std::make_tuple(x.x, x.y, x.z);
    };
    for (std::size_t i = 0; i < tris.size(); ++i)
      for (int k = 0; k < 3; ++k) {
        auto a = pos(c.scene.triangles[tris[i]].v[k]),
             b = pos(c.scene.triangles[tris[i]].v[(k + 1) % 3]);
        if (b < a) std::swap(a, b);
        edges[{a, b}].push_back(i);
      }
    std::vector<std::vector<std::size_t>> next(tris.size());
    for (const auto& [edge, users] : edges)
      for (std::size_t i : users)
        for (std::size_t j : users)
          if (i != j) next[i].push_back(j);
    std::vector<bool> reached(tris.size(), false);
    std::vector<std::size_t> stack{0};
    reached[0] = true;
    while (!stack.empty()) {
      const std::size_t i = stack.back();
      stack.pop_back();
      for (std::size_t j : next[i])
        if (!reached[j]) reached[j] = true, stack.push_back(j);
    }
    CHECK(std::count(reached.begin(), reached.end(), false) == 0);
  }
  return count;
}

// A 3 x 2.4 m wall in z = 0 with a window [0.62, 2.1] x [0.8, 2.2] m cut out, meshed as the
// eight quads around the window (vertices on a 4 x 4 grid, so the mesh is conforming).
std::string window_wall_obj() {
  const double xs[] = {0, 0.62, 2.1, 3.0}, ys[] = {0, 0.8, 2.2, 2.4};
  std::string text = "g wall\n";
  for (double y : ys)
    for (double x : xs) text += obj_vertex({x, y, 0});
  for (int j = 0; j < 3; ++j)
    for (int i = 0; i < 3; ++i) {
      if (i == 1 && j == 1) continue;  // the window
      const int a = 1 + 4 * j + i;
      text += "f " + std::to_string(a) + " " + std::to_string(a + 1) + " " + std::to_string(a + 5) +
              " " + std::to_string(a + 4) + "\n";
    }
  return text;
}

TEST_CASE("a wall with a window gets grid cells clipped to it, slivers joined", "[patches]") {
  // Patches of 0.5 m: round(3 / 0.5) = 6 by round(2.4 / 0.5) = 5 cells of 0.5 x 0.48 m along
  // the wall's edges. The fraction of each cell left beside the window (elementary geometry):
  // columns 0.5-1.0 and 2.0-2.5 m keep 0.24 and 0.8 of their width where the window covers
  // them, rows 0.48-0.96 and 1.92-2.4 m keep 0.667 and 0.417 of their height; columns 1.0-2.0 m
  // in rows 0.96-1.92 m are all window: 30 - 4 = 26 pieces. Four are under half a cell: the
  // 0.12 x 0.48 m strips left of the window (polar moment / area^2 = (0.12^2 + 0.48^2) /
  // (12 x 0.12 x 0.48) = 0.35) join the whole cells beside them (a 0.62 x 0.48 m rectangle:
  // 0.17); the 0.5 x 0.2 m pieces above the window (0.24) would make a strip or an L of over
  // 0.4 with any neighbour and stay: 24 patches.
  const Scene wall = load_obj_text(window_wall_obj(), "wall");
  const std::vector<PatchSpec> specs{{PatchSpec::Mode::size, 0.5}};
  const Cut c = cut(wall, specs);
  check_partition(c);
  CHECK(c.scene.surfaces[0].area == Approx(3 * 2.4 - 1.48 * 1.4).epsilon(1e-12));
  CHECK(c.patches.size() == 24);
  const double cell = 0.5 * 0.48;
  int whole = 0;
  for (std::size_t p = 0; p < c.patches.size(); ++p) {
    const double area = c.patches.patches[p].area;
    INFO("patch " << c.patches.patches[p].name << ", area " << area);
    CHECK(area >= 0.2 / 0.48 * cell * (1 - 1e-9));  // the pieces above the window
    CHECK(area <= 1.24 * cell * (1 + 1e-9));        // a cell and a strip of 0.24 of it
    if (std::fabs(area - cell) > 1e-9 * cell) continue;
    // A whole cell is an exact 0.5 x 0.48 m rectangle on the grid.
    ++whole;
    const auto [x0, x1] = patch_range(c, p, {1, 0, 0});
    const auto [y0, y1] = patch_range(c, p, {0, 1, 0});
    CHECK(x1 - x0 == Approx(0.5).epsilon(1e-9));
    CHECK(y1 - y0 == Approx(0.48).epsilon(1e-9));
    CHECK(std::fabs(x0 / 0.5 - std::round(x0 / 0.5)) < 1e-9);
    CHECK(std::fabs(y0 / 0.48 - std::round(y0 / 0.48)) < 1e-9);
  }
  // Untouched by the window: 6 in the bottom row, 2 in the next, 1 each in the two window rows
  // (the right column; the left one took a strip), 2 in the top row.
  CHECK(whole == 12);
  CHECK(check_regions(c, 0) == 24);  // connected and compact
  // The layout of the cut mesh is the layout the cuts came from: cutting again cuts nothing.
  const Cut again = cut(c.scene, specs);
  CHECK(again.scene.triangles.size() == c.scene.triangles.size());
  CHECK(again.patches.triangle_index == c.patches.triangle_index);
  CHECK(again.patches.triangle_offset == c.patches.triangle_offset);
}

TEST_CASE("an irregular surface is grouped into connected compact regions", "[patches]") {
  // A sphere of radius 1 (an icosphere of 320 triangles, area 12.3 m^2 against 4 pi for the
  // sphere), patches of 0.5 m: round(12.3 / 0.25) = 49 regions.
  const Scene sphere = load_obj_text(concentric_spheres_obj(1.0, 2.0, 2), "spheres");
  std::vector<PatchSpec> specs(sphere.surfaces.size());
  const std::uint32_t inner = std::uint32_t(sphere.find_surface("inner"));
  specs[inner] = {PatchSpec::Mode::size, 0.5};
  const Cut c = cut(sphere, specs);
  check_partition(c);
  CHECK(analyse_topology(c.scene).closed);
  const int count = check_regions(c, inner);
  CHECK(count == std::lround(c.scene.surfaces[inner].area / 0.25));
  CHECK(count == 49);
}

TEST_CASE("a large irregular surface is seeded on a grid and still compact", "[patches]") {
  // An icosphere of 5120 triangles, patches of 0.1 m: about 1250 regions over some 20,000
  // triangles, past the farthest-point sampling's budget, so the seeds come from a grid of
  // the regions' size (more seeds than the area asks for, as cells along the surface are cut
  // by it: at most twice as many here).
  const Scene sphere = load_obj_text(concentric_spheres_obj(1.0, 2.0, 4), "spheres");
  std::vector<PatchSpec> specs(sphere.surfaces.size());
  const std::uint32_t inner = std::uint32_t(sphere.find_surface("inner"));
  specs[inner] = {PatchSpec::Mode::size, 0.1};
  const Cut c = cut(sphere, specs);
  check_partition(c);
  const double target = c.scene.surfaces[inner].area / 0.01;
  REQUIRE(target * c.scene.surfaces[inner].triangle_count > 2e7);
  const int count = check_regions(c, inner);
  CHECK(count >= target);
  CHECK(count <= 2 * target);
}

TEST_CASE("patches and their tallies are the same for any thread count", "[patches]") {
  // A cylinder inside a box: grids, bands and sectors, and regions on the caps; the layout is
  // made twice, and the tallies traced on 1 and on 2 threads are identical to the last count.
  const std::string obj = box_obj(1, 1, 1.2, 2), cyl = cylinder_obj(0.2, 0.6, 16);
  const Scene box = load_obj_text(obj, "box");
  std::string shifted;  // the cylinder moved into the box, its vertex numbers after the box's
  std::istringstream in(cyl);
  for (std::string line; std::getline(in, line);) {
    if (line.rfind("f", 0) == 0) {
      std::istringstream f(line.substr(1));
      shifted += "f";
      for (int i; f >> i;) shifted += " " + std::to_string(i + int(box.vertices.size()));
      shifted += "\n";
    } else if (line.rfind("v ", 0) == 0) {
      double x, y, z;
      std::istringstream(line.substr(2)) >> x >> y >> z;
      shifted += obj_vertex({x + 0.5, y + 0.5, z + 0.3});
    } else {
      shifted += line + "\n";
    }
  }
  const Scene scene = load_obj_text(obj + shifted, "box and cylinder");
  const std::vector<PatchSpec> specs(scene.surfaces.size(), {PatchSpec::Mode::size, 0.3});
  const Cut a = cut(scene, specs), b = cut(scene, specs);
  check_partition(a);
  CHECK(a.patches.triangle_index == b.patches.triangle_index);
  CHECK(a.patches.triangle_offset == b.patches.triangle_offset);
  const Tracer tracer(a.scene);
  ViewFactorOptions options;
  options.rays_per_patch = 2000;
  options.seed = 11;
  options.threads = 1;
  const Tallies one = trace_tallies(a.scene, a.patches, tracer, options);
  options.threads = 2;
  const Tallies two = trace_tallies(a.scene, a.patches, tracer, options);
  CHECK(one.hit_count == two.hit_count);
  CHECK(one.hit_patch == two.hit_patch);
}

TEST_CASE("one patch per triangle, two-sided surfaces get both sides", "[patches]") {
  Scene plates = load_obj_text(parallel_rectangles_obj(1, 2, 1), "plates");
  plates.surfaces[1].two_sided = true;
  std::vector<PatchSpec> specs(plates.surfaces.size(), {PatchSpec::Mode::per_triangle, 0});
  const PatchSet patches = make_patches(plates, specs);
  const std::size_t n0 = plates.surfaces[0].triangle_count, n1 = plates.surfaces[1].triangle_count;
  CHECK(patches.size() == n0 + 2 * n1);
  CHECK(patches.patches[n0].name == "upper#1 (front)");
  CHECK(patches.patches[n0 + n1].name == "upper#1 (back)");
}

TEST_CASE("longest-edge bisection keeps areas and stays conforming", "[patches]") {
  const Scene cube = load_obj_text(unit_cube_obj(), "cube");
  std::vector<double> limit(cube.surfaces.size(), 0.3);
  limit[0] = INFINITY;
  const Scene fine = split_long_edges(cube, limit);
  CHECK(fine.triangles.size() > cube.triangles.size() * 10);
  for (std::uint32_t s = 1; s < fine.surfaces.size(); ++s) {
    double area = 0;
    const Surface& surface = fine.surfaces[s];
    for (std::uint32_t t = surface.first_triangle;
         t < surface.first_triangle + surface.triangle_count; ++t) {
      const Triangle& tri = fine.triangles[t];
      for (int k = 0; k < 3; ++k)
        CHECK(norm(fine.vertices[tri.v[k]] - fine.vertices[tri.v[(k + 1) % 3]]) <= 0.3 + 1e-12);
      area += fine.triangle_area(t);
    }
    CHECK(area == Approx(1.0).epsilon(1e-12));
  }
  CHECK(analyse_topology(fine).closed);
}

TEST_CASE("a ray budget is spread by area with a floor", "[patches]") {
  const Scene plates = load_obj_text(box_obj(1, 2, 3), "box");
  const PatchSet patches = make_surface_patches(plates);
  const auto rays = rays_by_area(patches, 220000, 30000);
  double area = 0;
  for (const Patch& p : patches.patches) area += p.area;  // 22 m^2
  for (std::size_t i = 0; i < patches.size(); ++i) {
    const double share = 220000 * patches.patches[i].area / area;
    CHECK(rays[i] == std::max<std::uint64_t>(30000, std::uint64_t(std::llround(share))));
  }
}
