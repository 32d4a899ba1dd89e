// Comfort figures: the [comfort] table (bad inputs refused clearly), the angle-factor sampler
// (closure, the person's projected-area density against a quadrature of the same density),
// the figures from hand-made tallies, and the `comfort` / `compare` commands end to end.
// Closed forms and a worked room are in validation/test_comfort_validation.cpp.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <map>
#include <sstream>
#include <string>

#include "hearthray/comfort.hpp"
#include "hearthray/comfort_report.hpp"
#include "hearthray/error.hpp"
#include "hearthray/sampling.hpp"
#include "hearthray/scene_file.hpp"
#include "hearthray/units.hpp"
#include "support/cli_run.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

// A scene on the unit cube of box_obj with every surface black at 20 C, and `comfort` text.
std::string cube_scene(const std::string& comfort) {
  return "[mesh]\nfile = \"cube.obj\"\nunit = \"m\"\n[rays]\nper_patch = 5000\n"
         "[defaults]\nemissivity = 1.0\ntemperature = \"20 C\"\n" +
         comfort;
}

const char* kGoodComfort = R"(
[comfort]
air_temperature = "21 C"
rays = 2000
[comfort.point.middle]
position = ["0.5 m", "0.5 m", "500 mm"]
kind = "seated"
[comfort.grid]
height = "0.5 m"
spacing = "0.25 m"
margin = "0.2 m"
)";

// Reads `toml` as a scene file beside the unit cube; returns the error message, or "".
std::string scene_error(const ScratchDir& dir, const std::string& toml) {
  write_text(dir / "cube.obj", unit_cube_obj());
  write_text(dir / "scene.toml", toml);
  try {
    const SceneFile f = read_scene_file((dir / "scene.toml").string());
    if (f.comfort) comfort_points(load_scene(f), *f.comfort);
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

}  // namespace

TEST_CASE("comfort table is read with its units and defaults", "[comfort]") {
  ScratchDir dir("comfort-read");
  REQUIRE(scene_error(dir, cube_scene(kGoodComfort)).empty());
  const SceneFile f = read_scene_file((dir / "scene.toml").string());
  REQUIRE(f.comfort);
  CHECK(f.comfort->air_K == Approx(294.15));
  CHECK(f.comfort->air_speed == 0.1);
  REQUIRE(f.comfort->points.size() == 1);
  CHECK(f.comfort->points[0].body == ComfortBody::seated);
  CHECK(f.comfort->points[0].position.z == Approx(0.5));
  const std::vector<ComfortPoint> points = comfort_points(load_scene(f), *f.comfort);
  // Margin 0.2 leaves 0.6 m: points at 0.2, 0.45, 0.7 would not be centred; the grid is
  // centred, 3 points 0.25 apart: 0.25, 0.5, 0.75.
  REQUIRE(points.size() == 1 + 9);
  CHECK(points[1].position.x == Approx(0.25));
  CHECK(points[9].position.y == Approx(0.75));
  CHECK(points[9].grid_i == 2);
}

TEST_CASE("bad comfort inputs give errors naming the key and line", "[comfort]") {
  ScratchDir dir("comfort-bad");
  auto error_of = [&](const std::string& comfort) { return scene_error(dir, cube_scene(comfort)); };
  const std::string head = "[comfort]\nair_temperature = \"20 C\"\n";
  const std::string point = "[comfort.point.p]\nposition = [\"0.5 m\", \"0.5 m\", \"0.5 m\"]\n";

  std::string e = error_of(head + "air_temprature = \"20 C\"\n" + point);
  CHECK_THAT(e, Catch::Contains("unknown key 'air_temprature'") && Catch::Contains(":11:"));
  e = error_of("[comfort]\n" + point);
  CHECK_THAT(e, Catch::Contains("no air_temperature"));
  e = error_of("[comfort]\nair_temperature = 20\n" + point);
  CHECK_THAT(e, Catch::Contains("air_temperature") && Catch::Contains("\"20 C\""));
  e = error_of(head + "air_speed = \"2 m/s\"\n" + point);
  CHECK_THAT(e, Catch::Contains("between 0 and 1 m/s"));
  e = error_of(head + "air_speed = \"0.1\"\n" + point);
  CHECK_THAT(e, Catch::Contains("write air_speed = \"0.1 m/s\""));
  e = error_of(head);
  CHECK_THAT(e, Catch::Contains("neither points nor a grid"));
  e = error_of(head + "[comfort.point.p]\nposition = [\"0.5 m\", \"0.5 m\"]\n");
  CHECK_THAT(e, Catch::Contains("three lengths"));
  e = error_of(head + "[comfort.point.p]\nposition = [0.5, 0.5, 0.5]\n");
  CHECK_THAT(e, Catch::Contains("[comfort.point.p]") && Catch::Contains("unit"));
  e = error_of(head + point + "kind = \"lying\"\n");
  CHECK_THAT(e, Catch::Contains("\"sphere\", \"seated\" or \"standing\""));
  e = error_of(head + point + "colour = 1\n");
  CHECK_THAT(e, Catch::Contains("unknown key 'colour' in [comfort.point.p]"));
  e = error_of(head + "[comfort.point.p]\nposition = [\"0.5 m\", \"0.5 m\", \"2 m\"]\n");
  CHECK_THAT(e, Catch::Contains("[comfort.point.p]") && Catch::Contains("outside the mesh"));
  e = error_of(head + "[comfort.grid]\nmargin = \"0.6 m\"\n");
  CHECK_THAT(e, Catch::Contains("margin") && Catch::Contains("no room"));
  e = error_of(head + "[comfort.grid]\nspacing = \"0 m\"\n");
  CHECK_THAT(e, Catch::Contains("spacing in [comfort.grid] must be positive"));
  e = error_of(head + "[comfort.grid]\nheight = \"1.5 m\"\n");
  CHECK_THAT(e, Catch::Contains("height"));
}

TEST_CASE("angle factors close in a cube and follow the person's density", "[comfort]") {
  const Scene scene = load_obj_text(unit_cube_obj(), "cube");
  const PatchSet patches = make_surface_patches(scene);
  const Tracer tracer(scene);
  std::vector<ComfortPoint> points = {{"sphere", {0.5, 0.5, 0.5}, ComfortBody::sphere},
                                      {"seated", {0.5, 0.5, 0.5}, ComfortBody::seated},
                                      {"standing", {0.5, 0.5, 0.5}, ComfortBody::standing}};
  AngleFactorOptions options;
  options.rays = 40000;
  const std::vector<PointFactors> f = trace_angle_factors(scene, patches, tracer, points, options);
  const int roof = scene.find_surface("roof"), floor = scene.find_surface("floor");

  // Reference: the share of the density over the roof's solid angle, by a midpoint quadrature
  // over the roof (dOmega = cos(theta) dA / r^2) of the same weight a cos(beta) + b |sin(beta)|.
  auto roof_share = [](ComfortBody body) {
    const int n = 400;
    double roof_part = 0;
    for (int i = 0; i < n; ++i) {
      for (int j = 0; j < n; ++j) {
        const double x = (i + 0.5) / n - 0.5, y = (j + 0.5) / n - 0.5, z = 0.5;
        const double r2 = x * x + y * y + z * z, r = std::sqrt(r2);
        roof_part += projected_area_weight(body, z / r) * (z / r) / r2 / (n * n);
      }
    }
    // Whole sphere: 2 pi integral over sin(beta) in [-1, 1] of the weight.
    double total = 0;
    for (int i = 0; i < 20000; ++i) total += projected_area_weight(body, -1 + (i + 0.5) / 10000);
    total *= 2 * kPi / 10000;
    return roof_part / total;
  };
  for (std::size_t k = 0; k < points.size(); ++k) {
    INFO(points[k].name);
    std::uint64_t hits = 0;
    for (std::uint64_t c : f[k].body.count) hits += c;
    CHECK(hits == options.rays);  // closed cube: every ray lands on a patch
    CHECK(f[k].body.lost() == 0);
    const double expected = roof_share(points[k].body);
    const double got = factor_to_surface(f[k].body, patches, std::uint32_t(roof));
    CHECK(std::abs(got - expected) < 4 * factor_standard_error(expected, options.rays));
    // The density is symmetric up and down.
    const double down = factor_to_surface(f[k].body, patches, std::uint32_t(floor));
    CHECK(std::abs(down - expected) < 4 * factor_standard_error(expected, options.rays));
  }
  // Sphere: 1/6 by symmetry; a standing person sees less of roof and floor than a sphere.
  CHECK(roof_share(ComfortBody::sphere) == Approx(1.0 / 6).epsilon(1e-4));
  CHECK(roof_share(ComfortBody::standing) < roof_share(ComfortBody::seated));
  // The up-facing plane sees only the roof and the walls' upper halves, never the floor.
  CHECK(factor_to_surface(f[0].plane[plus_z], patches, std::uint32_t(floor)) == 0);
  // Same seed, other thread count: same counts.
  options.threads = 1;
  const std::vector<PointFactors> g = trace_angle_factors(scene, patches, tracer, points, options);
  CHECK(g[1].body.count == f[1].body.count);
  CHECK(g[2].plane[minus_y].count == f[2].plane[minus_y].count);
}

TEST_CASE("comfort figures from hand-made tallies", "[comfort]") {
  // Two patches: 0 at 330 K, 1 at 290 K (black: J = sigma T^4). The up-facing plane sees
  // patch 0 on a quarter of its rays, everything else sees patch 1 only.
  RadiantField field;
  field.radiosity = {kStefanBoltzmann * std::pow(330.0, 4), kStefanBoltzmann * std::pow(290.0, 4)};
  auto tally = [](std::uint64_t hot, std::uint64_t cold) {
    DirectionTally t;
    t.rays = hot + cold;
    if (hot) t.patch.push_back(0), t.count.push_back(hot);
    if (cold) t.patch.push_back(1), t.count.push_back(cold);
    return t;
  };
  PointFactors f;
  f.body = tally(100, 900);
  for (auto& p : f.plane) p = tally(0, 1000);
  f.plane[plus_z] = tally(250, 750);
  ComfortPoint point{"p", {0, 0, 0}, ComfortBody::sphere};
  const PointComfort c = evaluate_comfort(point, f, field, {293.15, 0.3});
  const double mrt = std::pow(0.1 * std::pow(330.0, 4) + 0.9 * std::pow(290.0, 4), 0.25);
  CHECK(c.mean_radiant.kelvin == Approx(mrt).epsilon(1e-12));
  const double up = std::pow(0.25 * std::pow(330.0, 4) + 0.75 * std::pow(290.0, 4), 0.25);
  CHECK(c.vertical.delta_K == Approx(up - 290.0).epsilon(1e-12));
  CHECK(c.vertical.kind == AsymmetryCase::warm_ceiling);
  CHECK(c.vertical.limit_K == 5);
  CHECK(c.horizontal.delta_K == Approx(0).margin(1e-9));
  // Air at 0.3 m/s: A = 0.6 (ISO 7726 / ASHRAE 55 simple form).
  CHECK(c.operative_K == Approx(0.6 * 293.15 + 0.4 * mrt).epsilon(1e-12));
  // Standard error of t_mr: per-ray values X in {330^4, 290^4} with p = 0.1, N = 1000.
  const double spread = std::pow(330.0, 4) - std::pow(290.0, 4);
  CHECK(c.mean_radiant.se_K ==
        Approx(std::sqrt(0.1 * 0.9 / 1000) * spread / (4 * std::pow(mrt, 3))).epsilon(1e-9));

  // A cold wall on -x: cool wall case.
  f.plane[minus_x] = tally(0, 1000);
  field.radiosity.push_back(kStefanBoltzmann * std::pow(270.0, 4));
  f.plane[minus_x].patch = {2};
  f.plane[minus_x].count = {1000};
  const PointComfort w = evaluate_comfort(point, f, field, {293.15, 0.1});
  CHECK(w.horizontal.kind == AsymmetryCase::cool_wall);
  CHECK(w.horizontal.axis == 0);
  CHECK(w.horizontal.delta_K == Approx(20).epsilon(1e-9));
  CHECK_FALSE(w.within_limits());
  CHECK(w.operative_K == Approx(0.5 * 293.15 + 0.5 * w.mean_radiant.kelvin));
}

TEST_CASE("asymmetry limits and dissatisfied curves behave", "[comfort]") {
  for (AsymmetryCase k : {AsymmetryCase::warm_ceiling, AsymmetryCase::cool_ceiling,
                          AsymmetryCase::warm_wall, AsymmetryCase::cool_wall}) {
    INFO(to_string(k));
    // Each limit is where about 5 % are dissatisfied (ISO 7730 categories A and B; ASHRAE 55
    // states 5 %). The curves are recalled from memory; this ties them to the limits, recalled
    // separately.
    CHECK(percentage_dissatisfied(k, asymmetry_limit_K(k)) > 3);
    CHECK(percentage_dissatisfied(k, asymmetry_limit_K(k)) < 8);
    CHECK(percentage_dissatisfied(k, 0) < 1);
    CHECK(percentage_dissatisfied(k, 12) > percentage_dissatisfied(k, 6));
  }
  CHECK(operative_air_weight(0.1) == 0.5);
  CHECK(operative_air_weight(0.4) == 0.6);
  CHECK(operative_air_weight(0.8) == 0.7);
}

TEST_CASE("comfort and compare commands run end to end", "[comfort]") {
  ScratchDir dir("comfort-cli");
  write_text(dir / "cube.obj", unit_cube_obj());
  write_text(dir / "a.toml", cube_scene(kGoodComfort));
  write_text(dir / "b.toml", cube_scene(std::string(kGoodComfort) + "\n[surface.roof]\n"
                                                                    "temperature = \"40 C\"\n"));
  CliResult r =
      run_cli("comfort " + (dir / "a.toml").string() + " -q -o " + (dir / "out").string(), dir);
  INFO(r.err);
  REQUIRE(r.status == 0);
  CHECK_THAT(r.out, Catch::Contains("middle") && Catch::Contains("within limits") &&
                        Catch::Contains("local codes"));
  const std::string csv = slurp(dir / "out" / "comfort.csv");
  CHECK(std::count(csv.begin(), csv.end(), '\n') == 1 + 10);
  CHECK(std::filesystem::exists(dir / "out" / "map_operative.png"));
  // The client report (its contents: tests/python/check_report_html.py).
  CHECK_THAT(slurp(dir / "out" / "report.html"), Catch::StartsWith("<!DOCTYPE html>") &&
                                                     Catch::Contains("middle") &&
                                                     Catch::Contains("data:image/png;base64,"));
  // Everything at 20 C: t_mr is 20.0 C everywhere.
  CHECK_THAT(csv, Catch::Contains("middle,seated,0.5,0.5,0.5,20,"));

  r = run_cli("compare " + (dir / "a.toml").string() + " " + (dir / "b.toml").string(), dir);
  REQUIRE(r.status == 0);
  CHECK_THAT(r.out, Catch::Contains("points within both limits") && Catch::Contains("b"));
  // Each scene's notes say which scene they are about.
  CHECK_THAT(r.err, Catch::Contains("note: a: [defaults] emissivity = 1: taken by") &&
                        Catch::Contains("note: b: [defaults] emissivity = 1: taken by"));
  // The named point is listed for each scene, and so are the points over a limit.
  CHECK_THAT(r.out, Catch::Contains("at middle: t_o (C), limits") &&
                        Catch::Contains("points over a limit:"));
  // Maps side by side: every scene's, on one colour range per quantity.
  r = run_cli("compare " + (dir / "a.toml").string() + " " + (dir / "b.toml").string() + " -q -o " +
                  (dir / "maps").string() + " --range 15,45",
              dir);
  REQUIRE(r.status == 0);
  CHECK_THAT(r.out, Catch::Contains("maps on one colour range each (mean radiant 15.0 to 45.0 C"));
  for (const char* name :
       {"a_map_operative.png", "b_map_operative.png", "b_map_asymmetry.png", "b_map_asymmetry.svg"})
    CHECK(std::filesystem::exists(dir / "maps" / name));

  write_text(dir / "none.toml", cube_scene(""));
  r = run_cli("comfort " + (dir / "none.toml").string(), dir);
  CHECK(r.status == 2);
  CHECK_THAT(r.err, Catch::Contains("no [comfort] table"));
}

TEST_CASE("comfort and compare exit 5 when the scene's ray target is missed", "[comfort]") {
  ScratchDir dir("comfort-target");
  write_text(dir / "cube.obj", unit_cube_obj());
  // The cube's face-to-face factor is 0.2 (Howell's catalogue), so 16384 rays per face leave a
  // standard error near sqrt(0.2 x 0.8 / 16384) = 0.003: a target of 1e-5 is out of reach
  // within that cap, one of 0.05 is met by the first round.
  auto scene = [&](const char* name, const char* target) {
    write_text(dir / name, std::string("[mesh]\nfile = \"cube.obj\"\nunit = \"m\"\n[rays]\n") +
                               "target_error = " + target +
                               "\nmax_per_patch = 16384\n[defaults]\n" +
                               "emissivity = 1.0\ntemperature = \"20 C\"\n" + kGoodComfort);
    return "'" + (dir / name).string() + "'";
  };
  const std::string missed = scene("missed.toml", "1e-5"), met = scene("met.toml", "0.05");
  CliResult r = run_cli("comfort " + missed + " -q -o '" + (dir / "out").string() + "'", dir);
  CHECK(r.status == 5);
  CHECK_THAT(r.err, Catch::Contains("ray target NOT reached") && Catch::Contains("ray cap"));
  CHECK(std::filesystem::exists(dir / "out" / "report.html"));  // outputs of the last round
  r = run_cli("comfort " + met, dir);
  CHECK(r.status == 0);
  CHECK_THAT(r.out, Catch::Contains("ray target: reached"));
  r = run_cli("compare " + met + " " + missed + " -q", dir);
  CHECK(r.status == 5);
  CHECK_THAT(r.err, Catch::Contains("missed.toml: ray target NOT reached"));
  CHECK_THAT(r.err, !Catch::Contains("met.toml:"));
  CHECK(run_cli("compare " + met + " " + met + " -q", dir).status == 0);
}

TEST_CASE("comfort cautions say by their kind which are general", "[comfort]") {
  // Unit cube: every surface comes down to 1 m or lower, within the 2 m reach of the
  // cautions. The roof at 80 C is hot to touch; nothing is glass. (Own case, no source.)
  std::istringstream obj(unit_cube_obj());
  const Scene scene = load_obj(obj, "cube");
  std::vector<SurfaceHeat> surfaces(scene.surfaces.size());
  for (std::size_t s = 0; s < surfaces.size(); ++s) {
    surfaces[s].name = scene.surfaces[s].name;
    surfaces[s].temperature_max_K = kZeroCelsius + 20;
  }
  const int roof = scene.find_surface("roof");
  REQUIRE(roof >= 0);
  surfaces[std::size_t(roof)].temperature_max_K = kZeroCelsius + 80;
  const std::vector<Caution> cautions = comfort_cautions(scene, surfaces);
  REQUIRE(cautions.size() == 3);
  CHECK(cautions[0].kind == CautionKind::hot_in_reach);
  CHECK_FALSE(cautions[0].general());
  CHECK_THAT(cautions[0].text, Catch::StartsWith("roof reaches 80 C"));
  CHECK(cautions[1].kind == CautionKind::clearances);
  CHECK(cautions[2].kind == CautionKind::estimates);
  CHECK(cautions[1].general());
  CHECK(cautions[2].text == kComfortCaution);
}

TEST_CASE("comfort names every hot surface near a glass surface in one caution", "[comfort]") {
  // A window (x = 0) with parallel 1 m squares at 0.2 m, 0.5 m and 3 m, and a cool one at
  // 0.1 m; glass within 0.6 m of a surface above 40 C is cautioned. (Own case, no source.)
  std::string obj;
  int vertices = 0;
  for (const auto& [name, x] : std::vector<std::pair<std::string, double>>{{"window", 0.0},
                                                                           {"panel_a", 0.2},
                                                                           {"panel_b", 0.5},
                                                                           {"panel_far", 3.0},
                                                                           {"cool_wall", 0.1}}) {
    for (const auto& [y, z] :
         std::vector<std::pair<double, double>>{{0, 1}, {1, 1}, {1, 2}, {0, 2}})
      obj += "v " + std::to_string(x) + " " + std::to_string(y) + " " + std::to_string(z) + "\n";
    obj += "g " + name + "\nf " + std::to_string(vertices + 1) + " " +
           std::to_string(vertices + 2) + " " + std::to_string(vertices + 3) + "\nf " +
           std::to_string(vertices + 1) + " " + std::to_string(vertices + 3) + " " +
           std::to_string(vertices + 4) + "\n";
    vertices += 4;
  }
  std::istringstream in(obj);
  const Scene scene = load_obj(in, "glass");
  std::vector<SurfaceHeat> surfaces(scene.surfaces.size());
  const std::map<std::string, double> celsius = {
      {"window", 20}, {"panel_a", 60}, {"panel_b", 55}, {"panel_far", 70}, {"cool_wall", 20}};
  for (std::size_t s = 0; s < surfaces.size(); ++s) {
    surfaces[s].name = scene.surfaces[s].name;
    surfaces[s].temperature_max_K = kZeroCelsius + celsius.at(surfaces[s].name);
  }
  const std::vector<Caution> cautions = comfort_cautions(scene, surfaces);
  std::vector<std::string> glass;
  for (const Caution& c : cautions)
    if (c.kind == CautionKind::glass_near_heat) glass.push_back(c.text);
  REQUIRE(glass.size() == 1);
  CHECK_THAT(glass[0], Catch::StartsWith("window (glass) is near heat: panel_a at 0.20 m (60 C) "
                                         "and panel_b at 0.50 m (55 C);"));
  CHECK_THAT(glass[0], !Catch::Contains("panel_far") && !Catch::Contains("cool_wall"));
  CHECK(cautions.back().kind == CautionKind::estimates);
}

TEST_CASE("comfort summary gives exact shares and lists the points over a limit", "[comfort]") {
  // 224 points, one over the warm-ceiling limit: a percentage rounds that to "100 %"; the
  // summary must say 223 of 224 and name the point.
  std::vector<PointComfort> points(224);
  for (std::size_t k = 0; k < points.size(); ++k) {
    PointComfort& p = points[k];
    p.point.name = "p_" + std::to_string(k);
    p.point.grid_i = int(k % 16);
    p.point.grid_j = int(k / 16);
    p.point.position = {0.25 * double(k % 16), 0.25 * double(k / 16), 0.6};
    p.mean_radiant.kelvin = p.operative_K = 295;
    p.vertical.kind = AsymmetryCase::warm_ceiling;
    p.vertical.limit_K = asymmetry_limit_K(AsymmetryCase::warm_ceiling);
    p.vertical.delta_K = 1;
    p.horizontal.kind = AsymmetryCase::cool_wall;
    p.horizontal.limit_K = asymmetry_limit_K(AsymmetryCase::cool_wall);
  }
  points[17].vertical.delta_K = 5.04;  // just over the 5 K limit (ISO 7730, recalled)
  const ComfortSummary s = summarise_comfort(points);
  CHECK(s.count_both == 223);
  REQUIRE(s.failing.size() == 1);
  CHECK(s.failing[0] == &points[17]);
  std::ostringstream out;
  print_comfort_table(out, points, s);
  CHECK_THAT(out.str(), Catch::Contains("both: 223 of 224") &&
                            Catch::Contains("over a limit (1): p_17 (vertical 5.04 K, warm "
                                            "ceiling, limit 5 K)"));
  CHECK_THAT(out.str(), !Catch::Contains("100 %"));
  // The asymmetry map's range reaches the limit, so the limit shows on its colour bar.
  CHECK(map_range(points, MapQuantity::asymmetry).second >= 5);
  CHECK(map_range(points, MapQuantity::asymmetry).first <= 0);
}
