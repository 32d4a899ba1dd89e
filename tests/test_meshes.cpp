// The validation meshes of tests/support/meshes.hpp are what they claim: areas, orientation of
// the fronts, closedness, and the same metres whatever the unit. References: elementary
// geometry (rectangle and regular-polygon areas; icosphere triangle count 20 * 4^level).
#include <catch2/catch.hpp>
#include <cmath>

#include "support/closed_forms.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

Vec3 centroid(const Scene& s, std::uint32_t t) {
  const auto& v = s.triangles[t].v;
  return (s.vertices[v[0]] + s.vertices[v[1]] + s.vertices[v[2]]) / 3.0;
}

// Every front normal of surface `name` has a positive dot product with `toward(centroid)`.
template <class F>
bool fronts_face(const Scene& s, const std::string& name, F toward) {
  const int k = s.find_surface(name);
  if (k < 0) return false;
  const Surface& surface = s.surfaces[static_cast<std::size_t>(k)];
  for (std::uint32_t t = surface.first_triangle;
       t < surface.first_triangle + surface.triangle_count; ++t) {
    if (!(dot(s.normal(t), toward(centroid(s, t))) > 0)) return false;
  }
  return true;
}

}  // namespace

TEST_CASE("box mesh: closed, inward fronts, face areas, units", "[meshes]") {
  const Scene box = load_obj_text(box_obj(1, 2, 3, 3), "box");
  CHECK(box.surface_names() ==
        std::vector<std::string>{"floor", "roof", "south", "north", "west", "east"});
  CHECK(analyse_topology(box).closed);
  CHECK(box.triangles.size() == 6 * 2 * 9);
  const Vec3 centre{0.5, 1, 1.5};
  for (const char* face : {"floor", "roof", "south", "north", "west", "east"}) {
    INFO(face);
    CHECK(fronts_face(box, face, [&](const Vec3& p) { return centre - p; }));
  }
  CHECK(box.surfaces[0].area == Approx(2.0).epsilon(1e-14));  // floor 1 x 2
  CHECK(box.surfaces[2].area == Approx(3.0).epsilon(1e-14));  // south 1 x 3
  CHECK(box.surfaces[4].area == Approx(6.0).epsilon(1e-14));  // west 2 x 3
  // A 1 m cube written in millimetres is the 1 m cube.
  const Scene mm = load_obj_text(unit_cube_obj(1, 1000), "mm", LengthUnit::mm);
  const Scene m = load_obj_text(unit_cube_obj(1, 1), "m", LengthUnit::m);
  REQUIRE(mm.vertices.size() == m.vertices.size());
  for (std::size_t i = 0; i < m.vertices.size(); ++i) {
    CHECK(norm(mm.vertices[i] - m.vertices[i]) < 1e-15);
  }
}

TEST_CASE("rectangle pairs and disks face each other", "[meshes]") {
  const Scene par = load_obj_text(parallel_rectangles_obj(2, 1, 0.5), "par");
  CHECK(par.surfaces[0].area == Approx(2.0));
  CHECK(fronts_face(par, "lower", [](const Vec3&) { return Vec3{0, 0, 1}; }));
  CHECK(fronts_face(par, "upper", [](const Vec3&) { return Vec3{0, 0, -1}; }));

  const Scene perp = load_obj_text(perpendicular_rectangles_obj(1, 2, 3), "perp");
  CHECK(perp.surfaces[0].area == Approx(2.0));
  CHECK(perp.surfaces[1].area == Approx(3.0));
  CHECK(fronts_face(perp, "base", [](const Vec3&) { return Vec3{0, 0, 1}; }));
  CHECK(fronts_face(perp, "wall", [](const Vec3&) { return Vec3{0, 1, 0}; }));

  const Scene disks = load_obj_text(coaxial_disks_obj(0.5, 1, 1, 64), "disks");
  CHECK(disks.surfaces[0].triangle_count == 64);
  CHECK(disks.surfaces[1].area == Approx(inscribed_polygon_area(1, 64)).epsilon(1e-13));
  CHECK(fronts_face(disks, "lower", [](const Vec3&) { return Vec3{0, 0, 1}; }));
  CHECK(fronts_face(disks, "upper", [](const Vec3&) { return Vec3{0, 0, -1}; }));
}

TEST_CASE("concentric icospheres: counts, radii, orientation, closedness", "[meshes]") {
  const Scene s = load_obj_text(concentric_spheres_obj(0.5, 2, 2), "spheres");
  CHECK(s.surfaces[0].triangle_count == 20 * 16);
  CHECK(s.surfaces[1].triangle_count == 20 * 16);
  CHECK(analyse_topology(s).closed);
  for (const Vec3& v : s.vertices) {
    const double r = norm(v);
    CHECK((std::fabs(r - 0.5) < 1e-12 || std::fabs(r - 2) < 1e-12));
  }
  CHECK(fronts_face(s, "inner", [](const Vec3& p) { return p; }));
  CHECK(fronts_face(s, "outer", [](const Vec3& p) { return -p; }));
  // Inscribed polyhedra: a little less than the sphere area, more with each level.
  CHECK(s.surfaces[0].area < 4 * 3.14159265358979 * 0.25);
  CHECK(s.surfaces[0].area > 0.97 * 4 * 3.14159265358979 * 0.25);
}

TEST_CASE("baffled plates: the baffle covers the plates' outline", "[meshes]") {
  const Scene s = load_obj_text(baffled_plates_obj(1, 2, 1.5), "baffle");
  CHECK(s.surface_names() == std::vector<std::string>{"lower", "upper", "baffle"});
  CHECK(s.surfaces[2].area == Approx(2.25));
  CHECK(fronts_face(s, "lower", [](const Vec3&) { return Vec3{0, 0, 1}; }));
  CHECK(fronts_face(s, "upper", [](const Vec3&) { return Vec3{0, 0, -1}; }));
  CHECK(fronts_face(s, "baffle", [](const Vec3&) { return Vec3{0, 0, 1}; }));
  CHECK(s.bounds.hi.z == Approx(2.0));
}
