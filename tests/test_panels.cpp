// Panels placed by position and size (hearthray/panels.hpp, [panel.NAME] in scene files): the
// host keeps its area less the panels' (host + panels = the host before, to round-off), the
// mesh stays closed (no gap, no face on another) for placements across mesh edges at any
// angle, every panel triangle lies inside its rectangle, and bad placements are refused with
// messages naming the panel. The panel's view factor against Howell's catalogue is the
// validation case "a panel cut out of a plate sees an opposed rectangle as the closed form
// says" (validation/test_view_factor_catalog.cpp).
#include <catch2/catch.hpp>
#include <cmath>
#include <random>
#include <string>

#include "hearthray/cache.hpp"
#include "hearthray/error.hpp"
#include "hearthray/gas_cache.hpp"
#include "hearthray/panels.hpp"
#include "hearthray/scene_file.hpp"
#include "support/cli_run.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

double total_area(const Scene& s) {
  double a = 0;
  for (const Surface& surface : s.surfaces) a += surface.area;
  return a;
}

// Whether every corner of the surface's triangles lies in the panel's rectangle (within eps).
bool inside_rectangle(const Scene& s, const std::string& name, const PanelPlacement& p,
                      const Vec3& along) {
  const Surface& surface = s.surfaces[std::size_t(s.find_surface(name))];
  const Vec3 n = s.normal(surface.first_triangle);
  const Vec3 u = normalized(along - n * dot(along, n)), v = cross(n, u);
  for (std::uint32_t t = surface.first_triangle;
       t < surface.first_triangle + surface.triangle_count; ++t)
    for (std::uint32_t k : s.triangles[t].v) {
      const Vec3 d = s.vertices[k] - p.centre;
      if (std::fabs(dot(d, u)) > 0.5 * p.length + 1e-12 ||
          std::fabs(dot(d, v)) > 0.5 * p.width + 1e-12)
        return false;
    }
  return true;
}

void check_closed(const Scene& s) {
  const MeshTopology t = analyse_topology(s);
  CHECK(t.closed);
  CHECK(t.boundary_edges == 0);
  CHECK(t.nonmanifold_edges == 0);
  CHECK(t.duplicate_triangles == 0);
}

PanelPlacement panel(const std::string& name, const std::string& host, Vec3 centre, double length,
                     double width) {
  PanelPlacement p;
  p.name = name;
  p.host = host;
  p.centre = centre;
  p.length = length;
  p.width = width;
  return p;
}

// The error of placing `panels` on the 3 x 2 x 2.5 box (4 x 4 grid per face), or "".
std::string placing_error(const std::vector<PanelPlacement>& panels) {
  Scene s = load_obj_text(box_obj(3, 2, 2.5, 4), "box");
  try {
    place_panels(&s, panels);
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

}  // namespace

TEST_CASE("panels keep the host's area and the mesh closed", "[panels]") {
  // Own check of the geometry, no published source: areas add up to round-off, and the
  // topology check (every edge with two faces) holds after the cut.
  Scene s = load_obj_text(box_obj(3, 2, 2.5, 4), "box");
  const double before = total_area(s);
  const double roof = s.surfaces[std::size_t(s.find_surface("roof"))].area;
  check_closed(s);
  // One panel across mesh lines at 30 degrees, one on grid lines, one on a wall.
  PanelPlacement tilted = panel("tilted", "roof", {1.1, 0.9, 2.5}, 1.0, 0.6);
  tilted.along = Vec3{std::cos(0.5236), std::sin(0.5236), 0};
  const PanelPlacement aligned = panel("aligned", "roof", {2.4375, 1.0, 2.5}, 0.375, 1.0);
  const PanelPlacement wall = panel("wall_panel", "north", {1.5, 2, 1.2}, 1.3, 0.7);
  const std::vector<PanelCut> cuts = place_panels(&s, {tilted, aligned, wall});
  REQUIRE(cuts.size() == 3);
  CHECK(cuts[0].area == Approx(0.6).epsilon(1e-12));
  CHECK(cuts[1].host_area_before == Approx(roof - 0.6).epsilon(1e-12));
  CHECK(cuts[1].host_area_after == Approx(roof - 0.6 - 0.375).epsilon(1e-12));
  for (const char* name : {"tilted", "aligned", "wall_panel"}) {
    const int k = s.find_surface(name);
    REQUIRE(k >= 0);
    CHECK_FALSE(s.surfaces[std::size_t(k)].two_sided);
  }
  CHECK(s.surfaces[std::size_t(s.find_surface("tilted"))].area == Approx(0.6).epsilon(1e-12));
  CHECK(s.surfaces[std::size_t(s.find_surface("wall_panel"))].area == Approx(0.91).epsilon(1e-12));
  CHECK(s.surfaces[std::size_t(s.find_surface("roof"))].area ==
        Approx(roof - 0.975).epsilon(1e-12));
  CHECK(total_area(s) == Approx(before).epsilon(1e-12));
  CHECK(inside_rectangle(s, "tilted", tilted, *tilted.along));
  CHECK(inside_rectangle(s, "aligned", aligned, {1, 0, 0}));
  CHECK(inside_rectangle(s, "wall_panel", wall, {1, 0, 0}));
  // The panels face as their hosts do (into the box).
  CHECK(s.normal(s.surfaces[std::size_t(s.find_surface("tilted"))].first_triangle).z == Approx(-1));
  CHECK(s.normal(s.surfaces[std::size_t(s.find_surface("wall_panel"))].first_triangle).y ==
        Approx(-1));
  check_closed(s);

  // Flush against the host's outline and against another panel: the walls' triangles on that
  // edge are split at the panel's corners, so the mesh stays closed.
  Scene flush = load_obj_text(box_obj(3, 2, 2.5, 4), "box");
  place_panels(&flush, {panel("p", "roof", {2.5, 1.0, 2.5}, 1.0, 0.5),
                        panel("q", "roof", {1.5, 1.0, 2.5}, 1.0, 0.5)});
  CHECK(flush.surfaces[std::size_t(flush.find_surface("p"))].area == Approx(0.5).epsilon(1e-12));
  CHECK(total_area(flush) == Approx(before).epsilon(1e-12));
  check_closed(flush);
}

TEST_CASE("random panels keep areas and a closed mesh", "[panels]") {
  // 40 random layouts of up to three panels at random angles on the floor of a box whose
  // floor is a 5 x 5 grid: a placement is either refused (panels overlapping) or leaves areas
  // and topology exact. Own property check, fixed seed.
  std::mt19937_64 rng(7);
  std::uniform_real_distribution<double> unit(0, 1);
  int placed = 0;
  for (int trial = 0; trial < 40; ++trial) {
    Scene s = load_obj_text(box_obj(2, 2, 1, 5), "box");
    const double before = total_area(s);
    std::vector<PanelPlacement> panels;
    for (int k = 0; k < 1 + trial % 3; ++k) {
      PanelPlacement p =
          panel("p" + std::to_string(k), "floor", {0.3 + 1.4 * unit(rng), 0.3 + 1.4 * unit(rng), 0},
                0.1 + 0.4 * unit(rng), 0.1 + 0.4 * unit(rng));
      const double angle = 3.14159 * unit(rng);
      p.along = Vec3{std::cos(angle), std::sin(angle), 0};
      panels.push_back(p);
    }
    try {
      const std::vector<PanelCut> cuts = place_panels(&s, panels);
      ++placed;
      for (const PanelCut& c : cuts)
        CHECK(s.surfaces[std::size_t(s.find_surface(c.name))].area ==
              Approx(c.area).epsilon(1e-11));
      CHECK(total_area(s) == Approx(before).epsilon(1e-12));
      for (const PanelPlacement& p : panels) CHECK(inside_rectangle(s, p.name, p, *p.along));
      check_closed(s);
    } catch (const InputError& e) {
      CHECK_THAT(e.what(), Catch::Contains("overlaps"));
    }
  }
  CHECK(placed >= 20);  // most layouts are placed, so the checks above ran
}

TEST_CASE("bad panel placements are refused with the panel named", "[panels]") {
  const Vec3 mid{1.5, 1.0, 2.5};
  CHECK_THAT(placing_error({panel("p", "roof", {2.8, 1.0, 2.5}, 1.0, 0.5)}),
             Catch::Contains("panel 'p'") && Catch::Contains("reaches past the host's edge"));
  CHECK_THAT(placing_error(
                 {panel("p", "roof", mid, 1.0, 0.5), panel("q", "roof", {1.9, 1, 2.5}, 1.0, 0.5)}),
             Catch::Contains("panel 'q'") && Catch::Contains("overlaps panel 'p'"));
  CHECK_THAT(placing_error({panel("p", "ceiling", mid, 1, 1)}),
             Catch::Contains("'ceiling' is not a surface") && Catch::Contains("roof"));
  CHECK_THAT(placing_error({panel("roof", "roof", mid, 1, 1)}),
             Catch::Contains("already a surface"));
  CHECK_THAT(placing_error({panel("p", "roof", {1.5, 1.0, 2.4}, 1, 1)}),
             Catch::Contains("0.1 m off the plane"));
  CHECK_THAT(placing_error({panel("p", "roof", mid, 0, 1)}), Catch::Contains("positive"));
  PanelPlacement normal = panel("p", "roof", mid, 1, 1);
  normal.along = Vec3{0, 0, 1};
  CHECK_THAT(placing_error({normal}), Catch::Contains("normal to its host"));
  CHECK_THAT(placing_error({panel("p", "roof", mid, 1, 1), panel("q", "p", mid, 0.2, 0.2)}),
             Catch::Contains("is a placed panel"));
  // A host that is not flat: the walls of the parallel plates mesh joined as one surface.
  Scene bent = load_obj_text(
      "v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nv 1 0 1\nv 1 1 1\ng bent\nf 1 2 3 4\nf 2 5 6 3\n",
      "bent");
  CHECK_THROWS_WITH(place_panels(&bent, {panel("p", "bent", {0.5, 0.5, 0}, 0.2, 0.2)}),
                    Catch::Contains("is not flat"));
}

TEST_CASE("panel tables in a scene file place panels and give them surface keys", "[panels]") {
  ScratchDir dir("panels-scene");
  write_text(dir / "box.obj", box_obj(3, 2, 2.5, 2));
  const std::string head =
      "[mesh]\nfile = \"box.obj\"\n[defaults]\nemissivity = 0.9\nadiabatic = true\n";
  write_text(dir / "a.toml", head + R"(
[panel.warm_b]
on = "roof"
centre = ["2.2 m", "1 m", "2.5 m"]
size = ["0.6 m", "500 mm"]
group = "row"
power = "200 W"
emissivity = 0.95
[panel.warm_a]
on = "roof"
centre = ["0.8 m", "1 m", "2.5 m"]
size = ["0.6 m", "0.5 m"]
along = [0, 1, 0]
group = "row"
power = "100 W"
[panel_group.row]
offset = ["0 m", "0.3 m", "0 m"]
)");
  const SceneFile f = read_scene_file((dir / "a.toml").string());
  REQUIRE(f.panels.size() == 2);
  CHECK(f.panels[0].name == "warm_b");  // file order
  CHECK(f.panels[0].centre.y == Approx(1.3));
  CHECK(f.panels[1].width == Approx(0.5));
  REQUIRE(f.panels[1].along);
  const Scene s = load_scene(f);
  REQUIRE(s.find_surface("warm_a") >= 0);
  CHECK(s.surfaces[std::size_t(s.find_surface("warm_b"))].area == Approx(0.3).epsilon(1e-12));
  const ThermalInput thermal = thermal_input(f, s);
  const std::vector<SurfaceThermal> resolved = resolve_thermal(f, s);
  const SurfaceThermal& b = resolved[std::size_t(s.find_surface("warm_b"))];
  CHECK(b.emissivity == 0.95);
  CHECK(b.condition.kind == ConditionKind::power);
  CHECK(b.condition.value == Approx(200));
  (void)thermal;

  // Moving a panel changes the cache key (the mesh file alone no longer fixes the geometry).
  TallyCacheSettings settings;
  settings.panels = f.panels;
  const TallyCacheKey key = tally_cache_key("mesh", f.mesh, s, settings);
  settings.panels[0].centre.x += 0.01;
  CHECK_FALSE(tally_cache_key("mesh", f.mesh, s, settings) == key);

  auto error_of = [&](const std::string& text) {
    write_text(dir / "bad.toml", head + text);
    try {
      load_scene(read_scene_file((dir / "bad.toml").string()));
    } catch (const InputError& e) {
      return std::string(e.what());
    }
    return std::string();
  };
  const std::string p = "[panel.p]\non = \"roof\"\ncentre = [\"1 m\", \"1 m\", \"2.5 m\"]\n";
  CHECK_THAT(error_of(p), Catch::Contains("[panel.p] needs on") && Catch::Contains("bad.toml:"));
  CHECK_THAT(error_of(p + "size = [\"1 m\"]\n"), Catch::Contains("size in [panel.p] must be 2"));
  CHECK_THAT(error_of(p + "size = [1, 1]\n"), Catch::Contains("size"));
  CHECK_THAT(error_of(p + "size = [\"1 m\", \"1 m\"]\ncolour = 1\n"),
             Catch::Contains("unknown key 'colour' in [panel.p]"));
  CHECK_THAT(error_of(p + "size = [\"1 m\", \"1 m\"]\ngroup = \"g\"\n"),
             Catch::Contains("no [panel_group.g] table"));
  CHECK_THAT(error_of(p + "size = [\"1 m\", \"1 m\"]\n[panel_group.g]\noffset = [\"1 m\", \"0 m\", "
                          "\"0 m\"]\n"),
             Catch::Contains("moves no panel"));
  CHECK_THAT(error_of(p + "size = [\"1 m\", \"1 m\"]\nalong = [0, 0, 0]\n"),
             Catch::Contains("along in [panel.p]"));
  CHECK_THAT(error_of(p + "size = [\"5 m\", \"1 m\"]\n"),
             Catch::Contains("[panel.p]") && Catch::Contains("reaches past"));
  CHECK_THAT(error_of(p + "size = [\"1 m\", \"1 m\"]\n[surface.p]\nemissivity = 0.5\n"),
             Catch::Contains("name the same surface"));
}

TEST_CASE("moving a placed panel misses the view-factor and the gas cache", "[panels][cache]") {
  // The keys: both go through the same hash of the mesh, which covers the placements.
  const std::string obj = box_obj(3, 2, 2.5, 2);
  const Scene bare = load_obj_text(obj, "box");
  const std::vector<PanelPlacement> here{panel("p", "roof", {1.5, 1.0, 2.5}, 1.0, 0.5)};
  std::vector<PanelPlacement> moved = here;
  moved[0].centre.x += 0.25;
  TallyCacheSettings tally;
  GasCacheSettings gas;
  auto keys = [&](const std::vector<PanelPlacement>& panels) {
    tally.panels = gas.panels = panels;
    return std::make_pair(tally_cache_key(obj, MeshOptions{}, bare, tally).hex(),
                          gas_cache_key(obj, MeshOptions{}, bare, gas).hex());
  };
  const auto none = keys({}), at_here = keys(here), at_moved = keys(moved);
  CHECK(none.first != at_here.first);
  CHECK(at_here.first != at_moved.first);
  CHECK(none.second != at_here.second);
  CHECK(at_here.second != at_moved.second);

  // Through the tool: the same scene is served from the cache, the moved panel is traced again.
  ScratchDir dir("panels-cache");
  write_text(dir / "box.obj", obj);
  auto scene = [](const char* x) {
    return std::string(
               "[mesh]\nfile = \"box.obj\"\n[rays]\nper_patch = 2000\n[defaults]\n"
               "emissivity = 0.9\nadiabatic = true\n[surface.floor]\ntemperature = "
               "\"15 C\"\n[panel.p]\non = \"roof\"\ncentre = [\"") +
           x + " m\", \"1 m\", \"2.5 m\"]\nsize = [\"1 m\", \"0.5 m\"]\npower = \"200 W\"\n";
  };
  auto solve = [&](const char* x) {
    write_text(dir / "scene.toml", scene(x));
    const CliResult r = run_cli("solve '" + (dir / "scene.toml").string() + "'", dir);
    INFO(r.err);
    REQUIRE(r.status == 0);
    return r.out;
  };
  CHECK_THAT(solve("1.5"), Catch::Contains("stored in cache"));
  CHECK_THAT(solve("1.5"), Catch::Contains("view factors: from cache"));
  CHECK_THAT(solve("1.75"), Catch::Contains("stored in cache"));
}
