// Scene loading from OBJ: units, surfaces from groups or materials, triangulation, degenerate
// triangles, topology, and a clear error for every kind of bad mesh.
#include <atomic>
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <random>
#include <sstream>
#include <string>

#include "hearthray/error.hpp"
#include "hearthray/scene.hpp"

using namespace hearthray;
namespace fs = std::filesystem;

namespace {

// A folder of its own under the system temporary directory, removed at the end of the test.
class TempDir {
 public:
  TempDir() {
    static std::atomic<int> counter{0};
    std::random_device rd;
    path_ = fs::temp_directory_path() /
            ("hearthray_scene_test_" + std::to_string(rd()) + "_" + std::to_string(counter++));
    fs::create_directories(path_);
  }
  ~TempDir() {
    std::error_code ec;
    fs::remove_all(path_, ec);
  }
  std::string write(const std::string& name, const std::string& text) const {
    const fs::path file = path_ / name;
    std::ofstream(file) << text;
    return file.string();
  }
  const fs::path& path() const { return path_; }

 private:
  fs::path path_;
};

Scene from_text(const std::string& obj, const MeshOptions& options = {}) {
  std::istringstream in(obj);
  return load_obj(in, "test.obj", options);
}

const char* const kTriangle = "v 0 0 0\nv 1 0 0\nv 0 1 0\n";

// Unit cube [0,1]^3, outward normals (counter-clockwise seen from outside), 8 shared vertices.
std::string cube(bool with_top = true) {
  std::string s =
      "v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nv 0 0 1\nv 1 0 1\nv 1 1 1\nv 0 1 1\n"
      "g bottom\nf 1 4 3\nf 1 3 2\n"
      "g front\nf 1 2 6\nf 1 6 5\n"
      "g right\nf 2 3 7\nf 2 7 6\n"
      "g back\nf 3 4 8\nf 3 8 7\n"
      "g left\nf 4 1 5\nf 4 5 8\n";
  if (with_top) s += "g top\nf 5 6 7\nf 5 7 8\n";
  return s;
}

}  // namespace

TEST_CASE("mesh units convert coordinates to metres", "[scene]") {
  // A 1000 mm square is 1 m^2; a 1 ft square is 0.3048^2 m^2 (1 ft = 0.3048 m exactly,
  // international yard and pound agreement, 1959).
  const std::string square = "v 0 0 0\nv 1000 0 0\nv 1000 1000 0\nv 0 1000 0\nf 1 2 3 4\n";
  MeshOptions mm;
  mm.unit = LengthUnit::mm;
  const Scene a = from_text(square, mm);
  REQUIRE(a.surfaces.size() == 1);
  CHECK(a.surfaces[0].area == Approx(1.0).epsilon(1e-12));
  CHECK(a.bounds.hi.x == Approx(1.0));
  CHECK(a.bounds.hi.y == Approx(1.0));
  CHECK(a.bounds.lo.x == 0.0);

  MeshOptions ft;
  ft.unit = LengthUnit::ft;
  const Scene b = from_text("v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nf 1 2 3 4\n", ft);
  CHECK(b.surfaces[0].area == Approx(0.3048 * 0.3048).epsilon(1e-12));
  CHECK(b.source == "test.obj");
}

TEST_CASE("coordinates keep double precision", "[scene]") {
  // 0.1 is not a float; the packaged tinyobjloader reads floats, so this checks our own reading.
  const Scene s = from_text("v 0.1 0 0\nv 1.1 0 0\nv 0.1 1 0\nf 1 2 3\n");
  CHECK(s.vertices[0].x == 0.1);
}

TEST_CASE("surfaces come from groups and objects, merged by name in first-seen order", "[scene]") {
  const Scene s = from_text(std::string(kTriangle) +
                            "v 0 0 1\n"
                            "f 1 2 3\n"  // before any group: "unnamed"
                            "g wall\nf 1 2 4\n"
                            "o floor\nf 1 3 4\n"
                            "g wall\nf 2 3 4\n"  // same name again: merged into 'wall'
                            "g   roof  \nf 4 3 2\n");
  REQUIRE(s.surface_names() == std::vector<std::string>{"unnamed", "wall", "floor", "roof"});
  const Surface& wall = s.surfaces[static_cast<std::size_t>(s.find_surface("wall"))];
  CHECK(wall.triangle_count == 2);
  CHECK(s.find_surface("ceiling") == -1);
  // Triangles are grouped by surface, in surface order, and point back to their surface.
  std::uint32_t next = 0;
  for (std::uint32_t k = 0; k < s.surfaces.size(); ++k) {
    CHECK(s.surfaces[k].first_triangle == next);
    for (std::uint32_t t = next; t < next + s.surfaces[k].triangle_count; ++t) {
      CHECK(s.triangles[t].surface == k);
    }
    next += s.surfaces[k].triangle_count;
  }
  CHECK(next == s.triangles.size());
  // The wall is the triangles (0,0,0)-(1,0,0)-(0,0,1) and (1,0,0)-(0,1,0)-(0,0,1).
  CHECK(wall.area == Approx(0.5 + 0.5 * std::sqrt(3.0)));
}

TEST_CASE("surfaces come from materials when asked", "[scene]") {
  TempDir dir;
  dir.write("kiln.mtl", "newmtl brick\nKd 0.8 0.3 0.2\nnewmtl steel\nKd 0.5 0.5 0.5\n");
  const std::string obj = dir.write("kiln.obj",
                                    "mtllib kiln.mtl\n"
                                    "v 0 0 0\nv 1 0 0\nv 0 1 0\nv 0 0 1\n"
                                    "g part1\nusemtl steel\nf 1 2 3\n"
                                    "usemtl brick\nf 1 2 4\n"
                                    "g part2\nusemtl steel\nf 1 3 4\n");
  MeshOptions by_material;
  by_material.surfaces_from = SurfacesFrom::materials;
  const Scene m = load_obj(obj, by_material);
  CHECK(m.surface_names() == std::vector<std::string>{"steel", "brick"});
  CHECK(m.surfaces[0].triangle_count == 2);
  CHECK(m.surfaces[0].area == Approx(1.0));

  const Scene g = load_obj(obj);  // groups by default: the materials do not matter
  CHECK(g.surface_names() == std::vector<std::string>{"part1", "part2"});
  CHECK(g.surfaces[0].triangle_count == 2);
}

TEST_CASE("polygons are triangulated keeping their area and front side", "[scene]") {
  // Unit square written counter-clockwise seen from +z: two triangles, normals +z.
  const Scene quad = from_text("v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nf 1 2 3 4\n");
  REQUIRE(quad.triangles.size() == 2);
  CHECK(quad.surfaces[0].area == Approx(1.0));
  for (std::uint32_t t = 0; t < 2; ++t) {
    CHECK(quad.normal(t).z == Approx(1.0));
    CHECK(quad.triangle_area(t) == Approx(0.5));
  }
  // Non-convex L-shaped hexagon of area 3 (a 2x2 square less a unit square), written
  // clockwise from +z: four triangles facing -z that cover exactly the L.
  const Scene ell =
      from_text("v 0 0 0\nv 0 2 0\nv 1 2 0\nv 1 1 0\nv 2 1 0\nv 2 0 0\nf 1 2 3 4 5 6\n");
  REQUIRE(ell.triangles.size() == 4);
  CHECK(ell.surfaces[0].area == Approx(3.0));
  for (std::uint32_t t = 0; t < 4; ++t) CHECK(ell.normal(t).z == Approx(-1.0));
}

TEST_CASE("degenerate triangles are dropped with a warning naming the surface", "[scene]") {
  const Scene s = from_text(
      "v 0 0 0\nv 1 0 0\nv 0 1 0\nv 2 0 0\n"
      "g hearth\nf 1 2 3\nf 1 2 4\nf 2 2 3\n");  // collinear, and a repeated vertex
  REQUIRE(s.surfaces.size() == 1);
  CHECK(s.surfaces[0].triangle_count == 1);
  CHECK(s.surfaces[0].dropped_degenerate == 2);
  CHECK(s.surfaces[0].area == Approx(0.5));
  REQUIRE(s.warnings.size() == 1);
  CHECK_THAT(s.warnings[0], Catch::Contains("hearth") && Catch::Contains("2 degenerate"));
  // Bounds cover the triangles kept: (2,0,0) was only used by a dropped one.
  CHECK(s.bounds.hi.x == 1.0);
}

TEST_CASE("topology tells a closed cube from an open box", "[scene]") {
  const MeshTopology closed = analyse_topology(from_text(cube()));
  CHECK(closed.closed);
  CHECK(closed.boundary_edges == 0);
  CHECK(closed.nonmanifold_edges == 0);
  CHECK(closed.duplicate_triangles == 0);

  // Without its top the box has a square rim of 4 boundary edges.
  const MeshTopology open = analyse_topology(from_text(cube(false)));
  CHECK_FALSE(open.closed);
  CHECK(open.boundary_edges == 4);
  CHECK(open.nonmanifold_edges == 0);

  // The same cube with every face given its own copies of the vertices: welding by position
  // still finds it closed.
  const Scene cube_scene = from_text(cube());
  std::ostringstream unwelded;
  for (const Triangle& t : cube_scene.triangles) {
    for (std::uint32_t v : t.v) {
      const Vec3& p = cube_scene.vertices[v];
      unwelded << "v " << p.x << ' ' << p.y << ' ' << p.z << '\n';
    }
    unwelded << "f -3 -2 -1\n";
  }
  const Scene split = from_text(unwelded.str());
  CHECK(split.vertices.size() == 36);
  CHECK(analyse_topology(split).closed);

  // A triangle repeated (here with its vertices in another order) is a duplicate, and its
  // three edges now have three faces each.
  const MeshTopology dup = analyse_topology(from_text(cube() + "f 7 5 6\n"));
  CHECK_FALSE(dup.closed);
  CHECK(dup.duplicate_triangles == 1);
  CHECK(dup.nonmanifold_edges == 3);
  CHECK(dup.boundary_edges == 0);
}

TEST_CASE("a bad mesh file is an error naming the file", "[scene]") {
  TempDir dir;
  const std::string missing = (dir.path() / "no_such_kiln.obj").string();
  CHECK_THROWS_AS(load_obj(missing), InputError);
  CHECK_THROWS_WITH(load_obj(missing),
                    Catch::Contains("no_such_kiln.obj") && Catch::Contains("does not exist"));
  CHECK_THROWS_WITH(load_obj(dir.path().string()), Catch::Contains("is a folder"));
  const std::string empty = dir.write("empty.obj", "# nothing here\nv 0 0 0\n");
  CHECK_THROWS_WITH(load_obj(empty), Catch::Contains("empty.obj") && Catch::Contains("no faces"));
}

TEST_CASE("bad coordinates are errors naming the line", "[scene]") {
  // tinyobjloader reads "nan" as 0 and "1e999" as inf without a word; we must not.
  CHECK_THROWS_WITH(
      from_text("v 0 0 0\nv nan 0 0\nv 0 1 0\nf 1 2 3\n"),
      Catch::Contains("test.obj:2:") && Catch::Contains("'nan'") && Catch::Contains("finite"));
  CHECK_THROWS_WITH(from_text("v 0 0 0\nv 1 0 0\nv 0 1e999 0\nf 1 2 3\n"),
                    Catch::Contains("test.obj:3:") && Catch::Contains("'1e999'"));
  CHECK_THROWS_WITH(from_text("v 0 0 0\nv inf 0 0\nv 0 1 0\nf 1 2 3\n"),
                    Catch::Contains("test.obj:2:") && Catch::Contains("'inf'"));
  CHECK_THROWS_WITH(from_text("v 0 0 0\nv 1 0\nv 0 1 0\nf 1 2 3\n"),
                    Catch::Contains("test.obj:2:") && Catch::Contains("three numbers"));
  CHECK_THROWS_WITH(from_text("v 0 0 0\nv 1,5 0 0\nv 0 1 0\nf 1 2 3\n"),
                    Catch::Contains("test.obj:2:") && Catch::Contains("'1,5'"));
}

TEST_CASE("bad face indices are errors naming the line", "[scene]") {
  CHECK_THROWS_WITH(from_text(std::string(kTriangle) + "f 1 2 3\nf 1 2 7\n"),
                    Catch::Contains("test.obj:5:") && Catch::Contains("vertex 7") &&
                        Catch::Contains("only 3 vertices"));
  CHECK_THROWS_WITH(from_text(std::string(kTriangle) + "f 1 2 -5\n"),
                    Catch::Contains("test.obj:4:") && Catch::Contains("vertex -5"));
  CHECK_THROWS_WITH(from_text(std::string(kTriangle) + "f 0 1 2\n"),
                    Catch::Contains("test.obj:4:") && Catch::Contains("index 0"));
  CHECK_THROWS_WITH(from_text(std::string(kTriangle) + "f 1 2 x\n"),
                    Catch::Contains("test.obj:4:") && Catch::Contains("'x'"));
  CHECK_THROWS_WITH(from_text(std::string(kTriangle) + "f 1 2\n"),
                    Catch::Contains("test.obj:4:") && Catch::Contains("at least 3"));
  // Out of range in a quad: tinyobjloader would read the polygon's corners unchecked.
  CHECK_THROWS_WITH(from_text(std::string(kTriangle) + "f 1 2 3 9\n"),
                    Catch::Contains("test.obj:4:") && Catch::Contains("vertex 9"));
}

TEST_CASE("a mesh with no usable triangle is an error", "[scene]") {
  CHECK_THROWS_WITH(from_text("v 0 0 0\nv 1 0 0\nv 2 0 0\nf 1 2 3\n"),
                    Catch::Contains("no usable triangle") && Catch::Contains("degenerate"));
  CHECK_THROWS_WITH(from_text("v 0 0 0\nv 1 0 0\nv 0 1 0\nv 2 0 0\n"
                              "g good\nf 1 2 3\ng sliver\nf 1 2 4\n"),
                    Catch::Contains("'sliver'") && Catch::Contains("only degenerate"));
  CHECK_THROWS_WITH(from_text(""), Catch::Contains("test.obj") && Catch::Contains("no faces"));
}

TEST_CASE("surfaces from materials need the material file", "[scene]") {
  TempDir dir;
  MeshOptions by_material;
  by_material.surfaces_from = SurfacesFrom::materials;
  const std::string body = "v 0 0 0\nv 1 0 0\nv 0 1 0\nusemtl brick\nf 1 2 3\n";
  const std::string lost = dir.write("lost.obj", "mtllib lost.mtl\n" + body);
  CHECK_THROWS_WITH(load_obj(lost, by_material), Catch::Contains("lost.obj") &&
                                                     Catch::Contains("'brick'") &&
                                                     Catch::Contains("lost.mtl"));
  const std::string no_lib = dir.write("nolib.obj", body);
  CHECK_THROWS_WITH(load_obj(no_lib, by_material),
                    Catch::Contains("nolib.obj") && Catch::Contains("mtllib"));
  CHECK_THROWS_WITH(from_text(body, by_material),
                    Catch::Contains("test.obj") && Catch::Contains("stream"));
  // The same files are fine when surfaces come from groups.
  CHECK(load_obj(lost).surfaces.size() == 1);
}
