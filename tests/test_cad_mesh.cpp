// Meshes as CAD programs export them: polygons with collinear corners and concave polygons
// are cut into triangles in their own plane (a closed CAD mesh stays closed, no slivers),
// polygons that are not flat or cross themselves are reported.
#include <catch2/catch.hpp>
#include <cmath>
#include <random>
#include <sstream>
#include <string>

#include "hearthray/mesh_where.hpp"
#include "hearthray/scene.hpp"
#include "support/cad_meshes.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using hearthray::testing::cad_furnace_obj;
using hearthray::testing::CadFurnace;
using hearthray::testing::load_obj_text;

namespace {

// Twice the signed area of triangle t projected along `axis` (0 x, 1 y, 2 z), by the
// right-hand rule about that axis.
double projected_area(const Scene& s, std::uint32_t t, int axis) {
  const Vec3 n = cross(s.vertices[s.triangles[t].v[1]] - s.vertices[s.triangles[t].v[0]],
                       s.vertices[s.triangles[t].v[2]] - s.vertices[s.triangles[t].v[0]]);
  return 0.5 * n[axis];
}

// Every triangle of surface `name` faces +`axis` (sign +1) or -axis (sign -1) with a positive
// area, and their projected areas add up to `area`: together with the areas' sum this means
// the triangles tile the polygon without overlap (an overlapping or folded cut has a
// triangle facing the other way or more area).
void check_tiling(const Scene& s, const std::string& name, int axis, double sign, double area) {
  const int i = s.find_surface(name);
  REQUIRE(i >= 0);
  const Surface& surface = s.surfaces[std::size_t(i)];
  double sum = 0;
  for (std::uint32_t t = surface.first_triangle;
       t < surface.first_triangle + surface.triangle_count; ++t) {
    const double a = sign * projected_area(s, t, axis);
    CHECK(a > 1e-6);  // no sliver, no triangle facing back
    sum += a;
  }
  CHECK(sum == Approx(area).epsilon(1e-12));
  CHECK(surface.area == Approx(area).epsilon(1e-12));
  CHECK(surface.dropped_degenerate == 0);
}

}  // namespace

TEST_CASE("a CAD furnace with collinear corners and a concave wall loads closed", "[scene][cad]") {
  const Scene s = load_obj_text(cad_furnace_obj(), "furnace.obj");
  CHECK(s.warnings.empty());
  // Areas from the drawing (CadFurnace in tests/support/cad_meshes.hpp).
  check_tiling(s, "hearth_left", 2, +1, 1.0);
  check_tiling(s, "hearth_right", 2, +1, 1.0);
  check_tiling(s, "roof", 2, -1, 2.0);
  check_tiling(s, "wall_front", 1, +1, 2.0);
  check_tiling(s, "wall_back", 1, -1, 2.0);
  check_tiling(s, "end_right", 0, -1, 1.0);
  check_tiling(s, "end_left", 0, +1, 0.75);  // the L around the door
  check_tiling(s, "door", 0, +1, 0.25);
  // Each polygon of n corners gives n - 2 triangles: every corner, collinear ones too, is
  // a triangle corner, so the edges shared with the neighbours match.
  CHECK(s.surfaces[std::size_t(s.find_surface("wall_front"))].triangle_count == 4);
  CHECK(s.surfaces[std::size_t(s.find_surface("hearth_left"))].triangle_count == 3);
  const MeshTopology topology = analyse_topology(s);
  CHECK(topology.closed);
  CHECK(topology.boundary_edges == 0);
  CHECK(topology.nonmanifold_edges == 0);
}

TEST_CASE("the same CAD furnace in millimetres is the same furnace", "[scene][cad]") {
  const Scene s =
      load_obj_text(cad_furnace_obj({false, false, 1000}), "furnace_mm.obj", LengthUnit::mm);
  CHECK(s.warnings.empty());
  check_tiling(s, "end_left", 0, +1, 0.75);
  CHECK(analyse_topology(s).closed);
}

TEST_CASE("ear clipping tiles a concave star polygon", "[scene][cad]") {
  // A ten-pointed star, radii 1 and 0.4, in the plane z = 0.3, counter-clockwise from +z.
  // Its area, by the shoelace formula over its 20 corners: 20 * 0.5 * 1 * 0.4 * sin(pi / 10).
  std::ostringstream obj;
  const int corners = 20;
  for (int k = 0; k < corners; ++k) {
    const double r = k % 2 ? 0.4 : 1.0;
    const double a = 2 * std::acos(-1.0) * k / corners;
    obj.precision(17);
    obj << "v " << r * std::cos(a) << ' ' << r * std::sin(a) << " 0.3\n";
  }
  obj << "g star\nf";
  for (int k = 1; k <= corners; ++k) obj << ' ' << k;
  obj << "\n";
  const Scene s = load_obj_text(obj.str(), "star.obj");
  CHECK(s.warnings.empty());
  CHECK(s.triangles.size() == std::size_t(corners - 2));
  check_tiling(s, "star", 2, +1, 20 * 0.5 * 0.4 * std::sin(std::acos(-1.0) / 10));
}

TEST_CASE("a polygon that is not flat is reported with its line and offset", "[scene][cad]") {
  // A 1 m square with one corner lifted by 5 cm, then a flat one.
  const Scene s = load_obj_text(
      "v 0 0 0\nv 1 0 0\nv 1 1 0.05\nv 0 1 0\nv 0 0 1\nv 1 0 1\nv 1 1 1\n"
      "g panel\nf 5 6 7\nf 1 2 3 4\n",
      "bent.obj");
  REQUIRE(s.warnings.size() == 1);
  // The plane of Newell's normal passes through the corners' mean; the corners sit at
  // +-0.0125 m from it (the lift of 0.05 shared out as +-1/4 by symmetry of the square).
  CHECK_THAT(s.warnings[0], Catch::Contains("bent.obj:10:") && Catch::Contains("'panel'") &&
                                Catch::Contains("1 polygon(s) are not flat") &&
                                Catch::Contains("0.0125 m off its plane"));
  // A flat polygon off the axes, with collinear corners, says nothing.
  const Scene flat = load_obj_text(
      "v 0 0 0\nv 1 1 0\nv 2 2 0\nv 2 2 1\nv 0 0 1\ng tilted\nf 1 2 3 4 5\n", "flat.obj");
  CHECK(flat.warnings.empty());
  CHECK(flat.triangles.size() == 3);
  CHECK(flat.surfaces[0].area == Approx(2 * std::sqrt(2.0)));
}

TEST_CASE("a polygon that crosses itself is reported", "[scene][cad]") {
  // A lopsided bow tie: its edges (0,0)-(2,2) and (2,0)-(0,1) cross.
  const Scene s =
      load_obj_text("v 0 0 0\nv 2 2 0\nv 2 0 0\nv 0 1 0\ng tie\nf 1 2 3 4\n", "tie.obj");
  bool reported = false;
  for (const std::string& w : s.warnings)
    reported = reported || (w.find("cross themselves") != std::string::npos &&
                            w.find("tie.obj:6:") != std::string::npos);
  CHECK(reported);
}

TEST_CASE("faces lying on each other and solids cutting through each other are found",
          "[scene][cad]") {
  // Touching: each support's foot (0.1 x 0.4 m) on the hearth, and the block on each support's
  // top; places and areas from the drawing (tests/support/cad_meshes.hpp).
  CadFurnace with_blocks;
  with_blocks.blocks = true;
  const Scene s = load_obj_text(cad_furnace_obj(with_blocks), "blocks.obj");
  const std::vector<FaceContact> touching = face_contacts(s);
  REQUIRE(touching.size() == 4);
  for (const FaceContact& c : touching) {
    CHECK(c.kind == ContactKind::touching);
    CHECK(c.area == Approx(0.04).epsilon(1e-9));
    CHECK(c.centre.y == Approx(0.5));
    const std::string a = s.surfaces[c.surface_a].name, b = s.surfaces[c.surface_b].name;
    const double z = a == "hearth_right" ? 0.0 : 0.1;
    CHECK(c.centre.z == Approx(z).margin(1e-12));
    const bool left = a == "support_a" || b == "support_a";
    CHECK(c.centre.x == Approx(left ? 1.25 : 1.75));
  }
  // The plain furnace has walls meeting at edges only: nothing.
  CHECK(face_contacts(load_obj_text(cad_furnace_obj(), "furnace.obj")).empty());

  // A face given twice, the same way round.
  const Scene doubled = load_obj_text(
      "v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\ng a\nf 1 2 3 4\ng b\nf 1 2 3\n", "doubled.obj");
  const std::vector<FaceContact> twice = face_contacts(doubled);
  REQUIRE(twice.size() == 1);
  CHECK(twice[0].kind == ContactKind::doubled);
  CHECK(twice[0].area == Approx(0.5));
  CHECK_THAT(contact_sentence(doubled, twice[0]),
             Catch::Contains("the same face is in the mesh twice"));

  // Sunk 5 cm into the hearth: the block's sides cut hearth_right along a 0.4 m square.
  CadFurnace sunk;
  sunk.sunk_block = true;
  const Scene k = load_obj_text(cad_furnace_obj(sunk), "sunk.obj");
  const std::vector<FaceContact> cut = face_contacts(k);
  REQUIRE(cut.size() == 1);
  CHECK(cut[0].kind == ContactKind::crossing);
  CHECK(k.surfaces[cut[0].surface_a].name == "hearth_right");
  CHECK(k.surfaces[cut[0].surface_b].name == "block");
  CHECK(cut[0].length == Approx(1.6).epsilon(1e-9));
  CHECK(cut[0].centre.x == Approx(1.5));
  CHECK(cut[0].centre.y == Approx(0.5));
  CHECK(cut[0].centre.z == Approx(0).margin(1e-12));
  CHECK_THAT(contact_sentence(k, cut[0]),
             Catch::Contains("surfaces 'hearth_right' and 'block' cut through each other along "
                             "1.6 m around (1.5, 0.5, 0) m"));
}

TEST_CASE("ear clipping tiles random star-shaped polygons in tilted planes", "[scene][cad]") {
  // A polygon whose corners, seen from its centre, run round in angle order is simple
  // (star-shaped); its area is the sum of the triangles fanned from the centre, a cut the
  // loader never sees (it gets the outline only). Fixed seed; 40 polygons of 5 to 40 corners
  // with radii between 0.2 and 1, put in planes turned about two axes.
  std::mt19937 random(7);
  std::uniform_real_distribution<double> uniform(0.0, 1.0);
  for (int trial = 0; trial < 40; ++trial) {
    const int n = 5 + int(uniform(random) * 36);
    const double a = uniform(random) * 3, b = uniform(random) * 3;
    // Rotation about x by a, then about z by b, applied to (x, y, 0).
    auto place = [&](double x, double y) {
      const Vec3 p{x, y * std::cos(a), y * std::sin(a)};
      return Vec3{p.x * std::cos(b) - p.y * std::sin(b), p.x * std::sin(b) + p.y * std::cos(b),
                  p.z};
    };
    std::ostringstream obj;
    obj.precision(17);
    double area = 0, previous_x = 0, previous_y = 0, first_x = 0, first_y = 0;
    for (int k = 0; k < n; ++k) {
      const double r = 0.2 + 0.8 * uniform(random);
      const double t = 2 * std::acos(-1.0) * (k + 0.5 * uniform(random)) / n;
      const double x = r * std::cos(t), y = r * std::sin(t);
      if (k == 0) first_x = x, first_y = y;
      if (k > 0) area += 0.5 * (previous_x * y - previous_y * x);
      previous_x = x, previous_y = y;
      const Vec3 p = place(x, y);
      obj << "v " << p.x << ' ' << p.y << ' ' << p.z << "\n";
    }
    area += 0.5 * (previous_x * first_y - previous_y * first_x);
    obj << "g star\nf";
    for (int k = 1; k <= n; ++k) obj << ' ' << k;
    obj << "\n";
    const Scene s = load_obj_text(obj.str(), "star.obj");
    INFO("trial " << trial << ", " << n << " corners");
    CHECK(s.warnings.empty());
    REQUIRE(s.triangles.size() == std::size_t(n - 2));
    const Vec3 normal = cross(place(1, 0), place(0, 1));  // the plane's +z
    double sum = 0;
    for (std::uint32_t t = 0; t < s.triangles.size(); ++t) {
      const double along = dot(s.normal(t), normal);
      CHECK(along > 1 - 1e-9);  // every triangle faces the polygon's front
      sum += s.triangle_area(t);
    }
    CHECK(sum == Approx(area).epsilon(1e-12));
  }
}
