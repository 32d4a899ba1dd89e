// Patch geometry: areas, centroids and normals of patches against the elementary geometry of a
// box (face areas a b, face centres, inward axis normals), the two sides of a sheet, and the
// patch table written beside every matrix.
#include <catch2/catch.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "hearthray/patch_geometry.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

std::vector<std::string> split(const std::string& line) {
  std::vector<std::string> fields;
  std::stringstream in(line);
  std::string field;
  while (std::getline(in, field, ',')) fields.push_back(field);
  return fields;
}

}  // namespace

TEST_CASE("patch centroids and normals add up to each face of a box", "[patch_geometry]") {
  // Box 2 x 3 x 4 with inward normals, each face a 3 x 3 grid of quads, cut into patches of
  // about 0.7 m: every face is split into several patches of unequal shape.
  const double a = 2, b = 3, c = 4;
  const Scene box = load_obj_text(box_obj(a, b, c, 3), "box");
  const std::vector<PatchSpec> specs(box.surfaces.size(), {PatchSpec::Mode::size, 0.7});
  const Scene fine = subdivide(box, specs);
  const PatchSet patches = make_patches(fine, specs);
  REQUIRE(patches.size() > 6 * 4);
  const PatchGeometry g = patch_geometry(fine, patches);
  REQUIRE(g.centroid.size() == patches.size());
  // Face: name, area, centre and inward normal (elementary geometry of the box).
  struct Face {
    const char* name;
    double area;
    Vec3 centre, normal;
  };
  const Face faces[] = {{"floor", a * b, {a / 2, b / 2, 0}, {0, 0, 1}},
                        {"roof", a * b, {a / 2, b / 2, c}, {0, 0, -1}},
                        {"south", a * c, {a / 2, 0, c / 2}, {0, 1, 0}},
                        {"north", a * c, {a / 2, b, c / 2}, {0, -1, 0}},
                        {"west", b * c, {0, b / 2, c / 2}, {1, 0, 0}},
                        {"east", b * c, {a, b / 2, c / 2}, {-1, 0, 0}}};
  for (const Face& face : faces) {
    const int s = fine.find_surface(face.name);
    REQUIRE(s >= 0);
    double area = 0;
    Vec3 moment;
    int count = 0;
    for (std::size_t p = 0; p < patches.size(); ++p) {
      if (patches.patches[p].surface != std::uint32_t(s)) continue;
      ++count;
      area += patches.patches[p].area;
      moment += g.centroid[p] * patches.patches[p].area;
      CHECK(norm(g.normal[p] - face.normal) < 1e-12);
    }
    INFO(face.name);
    CHECK(count > 1);
    CHECK(area == Approx(face.area).epsilon(1e-12));
    // The area-weighted mean of the patch centroids is the centroid of the face.
    CHECK(norm(moment / area - face.centre) < 1e-12);
  }
}

TEST_CASE("the back patch of a sheet faces the other way from the same centroid",
          "[patch_geometry]") {
  Scene plates = load_obj_text(parallel_rectangles_obj(1, 2, 1), "plates");
  const int upper = plates.find_surface("upper");
  REQUIRE(upper >= 0);
  plates.surfaces[std::size_t(upper)].two_sided = true;
  const PatchSet patches = make_surface_patches(plates);
  REQUIRE(patches.size() == 3);
  const PatchGeometry g = patch_geometry(plates, patches);
  // lower: z = 0 facing +z over [0, 1] x [0, 2]; upper: z = 1 facing -z (front), +z (back).
  CHECK(norm(g.centroid[0] - Vec3{0.5, 1, 0}) < 1e-15);
  CHECK(norm(g.normal[0] - Vec3{0, 0, 1}) < 1e-15);
  CHECK(patches.patches[1].side == Side::front);
  CHECK(patches.patches[2].side == Side::back);
  CHECK(norm(g.centroid[1] - Vec3{0.5, 1, 1}) < 1e-15);
  CHECK(g.centroid[2] == g.centroid[1]);
  CHECK(norm(g.normal[1] - Vec3{0, 0, -1}) < 1e-15);
  CHECK(g.normal[2] == -g.normal[1]);

  std::ostringstream csv;
  write_patches_csv(csv, plates, patches);
  std::istringstream lines(csv.str());
  std::string line;
  std::getline(lines, line);
  CHECK(line ==
        "patch,name,surface,surface_index,side,area_m2,centroid_x_m,centroid_y_m,centroid_z_m,"
        "normal_x,normal_y,normal_z,triangles");
  std::vector<std::vector<std::string>> rows;
  while (std::getline(lines, line)) rows.push_back(split(line));
  REQUIRE(rows.size() == patches.size());
  for (std::size_t p = 0; p < rows.size(); ++p) {
    REQUIRE(rows[p].size() == 13);
    CHECK(rows[p][0] == std::to_string(p));  // row i of the matrix is patch i
    CHECK(rows[p][1] == patches.patches[p].name);
    CHECK(std::stod(rows[p][5]) == patches.patches[p].area);
    for (int axis = 0; axis < 3; ++axis) {
      CHECK(std::stod(rows[p][6 + std::size_t(axis)]) == g.centroid[p][axis]);
      CHECK(std::stod(rows[p][9 + std::size_t(axis)]) == g.normal[p][axis]);
    }
  }
  CHECK(rows[2][1] == "upper (back)");
  CHECK(rows[2][2] == "upper");
  CHECK(rows[2][4] == "back");
  CHECK(rows[2][5] == "2");   // 1 x 2 m
  CHECK(rows[2][12] == "2");  // two triangles
}
