// VTK XML unstructured-grid writer: the file is read back by a minimal parser of the format as
// the VTK File Formats document specifies it (VTKFile type="UnstructuredGrid", Piece with
// NumberOfPoints/NumberOfCells, Points, Cells with connectivity/offsets/types, CellData), and
// every count, index and value is checked against the scene it came from.
#include <unistd.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <limits>
#include <sstream>
#include <string>
#include <vector>

#include "hearthray/error.hpp"
#include "hearthray/vtu.hpp"
#include "support/meshes.hpp"

using namespace hearthray;

namespace {

std::string slurp(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

std::string attribute(const std::string& tag, const std::string& name) {
  const std::string key = name + "=\"";
  const std::size_t at = tag.find(key);
  if (at == std::string::npos) return "";
  const std::size_t begin = at + key.size();
  return tag.substr(begin, tag.find('"', begin) - begin);
}

// The numbers between the tags of the DataArray named `name` (strtod reads "nan").
struct Array {
  std::string type;
  int components = 1;
  std::vector<double> values;
};
Array data_array(const std::string& xml, const std::string& name) {
  std::size_t at = 0;
  while ((at = xml.find("<DataArray", at)) != std::string::npos) {
    const std::size_t close = xml.find('>', at);
    const std::string tag = xml.substr(at, close - at);
    if (attribute(tag, "Name") == name) {
      Array a;
      a.type = attribute(tag, "type");
      if (!attribute(tag, "NumberOfComponents").empty())
        a.components = std::stoi(attribute(tag, "NumberOfComponents"));
      const std::size_t end = xml.find("</DataArray>", close);
      std::istringstream body(xml.substr(close + 1, end - close - 1));
      std::string token;
      while (body >> token) a.values.push_back(std::strtod(token.c_str(), nullptr));
      return a;
    }
    at = close;
  }
  FAIL("no DataArray named " << name);
  return {};
}

std::size_t count(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (std::size_t at = text.find(what); at != std::string::npos; at = text.find(what, at + 1)) ++n;
  return n;
}

std::string temp_path(const std::string& name) {
  return (std::filesystem::temp_directory_path() /
          ("hearthray_test_vtu_" + std::to_string(::getpid()) + "_" + name))
      .string();
}

}  // namespace

TEST_CASE("VTU: cells per patch side, offsets, types, points and cell data", "[vtu]") {
  // Two 1 x 2 rectangles 1 apart (2 triangles each), the upper one two-sided: three patches,
  // six cells. An unused vertex in the file must not become a point.
  Scene scene =
      testing::load_obj_text(testing::parallel_rectangles_obj(1, 2, 1) + "v 9 9 9\n", "vtu-case");
  const int upper = scene.find_surface("upper");
  REQUIRE(upper >= 0);
  scene.surfaces[std::size_t(upper)].two_sided = true;
  const PatchSet patches = make_surface_patches(scene);
  REQUIRE(patches.size() == 3);

  const double nan = std::numeric_limits<double>::quiet_NaN();
  const PatchField flux{"net flux & more", "W/m²", {1250.5, nan, -3.25e-7}};
  const std::string path = temp_path("case.vtu");
  write_vtu(path, scene, patches, {patch_area_field(patches), flux});
  const std::string xml = slurp(path);
  std::remove(path.c_str());

  CHECK(xml.rfind("<?xml", 0) == 0);
  CHECK(xml.find("<VTKFile type=\"UnstructuredGrid\"") != std::string::npos);
  CHECK(count(xml, "<DataArray") == count(xml, "</DataArray>"));
  const std::size_t piece = xml.find("<Piece");
  REQUIRE(piece != std::string::npos);
  const std::string piece_tag = xml.substr(piece, xml.find('>', piece) - piece);
  const std::size_t n_points = std::stoul(attribute(piece_tag, "NumberOfPoints"));
  const std::size_t n_cells = std::stoul(attribute(piece_tag, "NumberOfCells"));
  CHECK(n_points == 8);
  REQUIRE(n_cells == 6);

  const Array points = data_array(xml, "Points");
  CHECK(points.components == 3);
  REQUIRE(points.values.size() == 3 * n_points);
  const Array connectivity = data_array(xml, "connectivity");
  const Array offsets = data_array(xml, "offsets");
  const Array types = data_array(xml, "types");
  REQUIRE(connectivity.values.size() == 3 * n_cells);
  REQUIRE(offsets.values.size() == n_cells);
  REQUIRE(types.values.size() == n_cells);
  for (std::size_t c = 0; c < n_cells; ++c) {
    CHECK(offsets.values[c] == double(3 * (c + 1)));  // end of each cell's connectivity
    CHECK(types.values[c] == 5);                      // VTK_TRIANGLE
  }

  // The surface names as field data: each name's character codes, then a 0.
  const Array names = data_array(xml, "surface_names");
  CHECK(names.type == "String");
  std::vector<std::string> decoded(1);
  for (double code : names.values) {
    if (code == 0)
      decoded.emplace_back();
    else
      decoded.back() += char(int(code));
  }
  decoded.pop_back();
  CHECK(decoded == scene.surface_names());

  const Array surface = data_array(xml, "surface");
  const Array patch = data_array(xml, "patch");
  const Array side = data_array(xml, "side");
  const Array area = data_array(xml, "area [m²]");
  const Array flux_read = data_array(xml, "net flux &amp; more [W/m²]");
  CHECK(surface.type == "Int32");
  CHECK(area.type == "Float64");
  REQUIRE(flux_read.values.size() == n_cells);

  // Cells come patch by patch; each cell's corners are its triangle's vertices, listed so that
  // the cell's normal points out of the side the cell stands for.
  std::size_t cell = 0;
  for (std::size_t p = 0; p < patches.size(); ++p) {
    for (std::uint32_t k = patches.triangle_offset[p]; k < patches.triangle_offset[p + 1];
         ++k, ++cell) {
      const std::uint32_t t = patches.triangle_index[k];
      const bool back = patches.patches[p].side == Side::back;
      CHECK(surface.values[cell] == patches.patches[p].surface);
      CHECK(patch.values[cell] == double(p));
      CHECK(side.values[cell] == (back ? 1 : 0));
      CHECK(area.values[cell] == patches.patches[p].area);
      if (std::isnan(flux.values[p]))
        CHECK(std::isnan(flux_read.values[cell]));
      else
        CHECK(flux_read.values[cell] == flux.values[p]);

      Vec3 corner[3];
      for (int j = 0; j < 3; ++j) {
        const auto id = std::size_t(connectivity.values[3 * cell + std::size_t(j)]);
        REQUIRE(id < n_points);
        corner[j] = {points.values[3 * id], points.values[3 * id + 1], points.values[3 * id + 2]};
      }
      const Vec3 n = normalized(cross(corner[1] - corner[0], corner[2] - corner[0]));
      CHECK(dot(n, scene.normal(t)) == Approx(back ? -1.0 : 1.0));
      // The same three positions as the triangle, in some order.
      for (std::uint32_t v : scene.triangles[t].v) {
        bool found = false;
        for (const Vec3& c : corner) found = found || c == scene.vertices[v];
        CHECK(found);
      }
    }
  }
}

TEST_CASE("VTU: bad fields and paths are input errors", "[vtu]") {
  const Scene scene = testing::load_obj_text(testing::unit_cube_obj(), "cube");
  const PatchSet patches = make_surface_patches(scene);
  const PatchField short_field{"temperature", "K", {1, 2}};
  CHECK_THROWS_AS(write_vtu(temp_path("a.vtu"), scene, patches, {short_field}), InputError);
  const PatchField clash{"patch", "", std::vector<double>(patches.size(), 1.0)};
  CHECK_THROWS_AS(write_vtu(temp_path("b.vtu"), scene, patches, {clash}), InputError);
  CHECK_THROWS_AS(write_vtu("/nonexistent-folder/x.vtu", scene, patches, {}), InputError);
}
