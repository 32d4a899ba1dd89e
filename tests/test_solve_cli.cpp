// `hearthray solve` end to end: bad scene inputs refused with a clear `error:` and exit 2, the
// non-convergence exit, the outputs, and the view-factor cache (hit, miss on a changed setting
// or mesh, a damaged file recomputed). Physical accuracy is checked in
// validation/test_solve_validation.cpp.
#include <algorithm>
#include <catch2/catch.hpp>
#include <iterator>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "support/cli_run.hpp"
#include "support/meshes.hpp"
#include "support/scene_fixtures.hpp"

using hearthray::Scene;
using namespace hearthray::testing;
using json = nlohmann::json;
namespace fs = std::filesystem;

namespace {

// The unit cube without its roof: an open box.
std::string open_box_obj() {
  return R"(v 0 0 0
v 1 0 0
v 1 1 0
v 0 1 0
v 0 0 1
v 1 0 1
v 1 1 1
v 0 1 1
g floor
f 1 2 3 4
g south
f 1 5 6 2
g north
f 4 3 7 8
g west
f 1 4 8 5
g east
f 2 6 7 3
)";
}

// A scene on cube.obj (unit_cube_obj: floor, roof, south, north, west, east).
std::string cube_scene(const std::string& body) {
  return "[mesh]\nfile = \"cube.obj\"\nunit = \"m\"\n\n" + body + "\n";
}

// The hot-floor / cold-roof cube at 20 000 rays per surface.
const std::string kGoodCube = std::string("[rays]\nper_patch = 20_000\n") + kHotFloorColdRoof;

void set_up_meshes(const ScratchDir& dir) {
  write_text(dir / "cube.obj", unit_cube_obj());
  write_text(dir / "open.obj", open_box_obj());
}

}  // namespace

TEST_CASE("solve refuses bad scenes with a clear error and exit 2", "[solve]") {
  const ScratchDir dir("solve-bad");
  set_up_meshes(dir);
  struct Case {
    const char* what;
    std::string toml;  // scene file text; empty: the arguments alone are wrong
    std::string args;  // after "solve <scene>"
    std::vector<std::string> expect;
  };
  const std::string ok = "emissivity = 0.5\ntemperature = \"300 K\"\n";
  const std::vector<Case> cases = {
      {"emissivity 0",
       cube_scene("[defaults]\nemissivity = 0\nadiabatic = true"),
       "",
       {"emissivity", "(0, 1]"}},
      {"emissivity above 1",
       cube_scene("[defaults]\n" + ok + "[surface.floor]\nemissivity = 1.2"),
       "",
       {"[surface.floor]", "(0, 1]", "1.2"}},
      {"negative kelvin",
       cube_scene("[defaults]\nemissivity = 0.5\ntemperature = \"-5 K\""),
       "",
       {"below absolute zero"}},
      {"two conditions on one surface",
       cube_scene("[defaults]\n" + ok +
                  "[surface.floor]\ntemperature = \"900 K\"\npower = \"1 kW\""),
       "",
       {"[surface.floor]", "both", "at most one"}},
      {"unit of another quantity",
       cube_scene("[defaults]\nemissivity = 0.5\ntemperature = \"1200 W\""),
       "",
       {"not a unit of temperature", "C, K, F"}},
      {"bare number",
       cube_scene("[defaults]\nemissivity = 0.5\ntemperature = 1200"),
       "",
       {"has no unit", "\"1200 C\""}},
      {"heat flux written as power",
       cube_scene("[defaults]\n" + ok + "[surface.floor]\nheat_flux = \"350 W\""),
       "",
       {"not a unit of heat flux", "W/m2"}},
      {"no condition and no default",
       cube_scene("[defaults]\nemissivity = 0.5\n[surface.floor]\ntemperature = \"900 K\""),
       "",
       {"surface 'roof' has no condition", "[defaults]"}},
      {"no emissivity and no default",
       cube_scene("[defaults]\nadiabatic = true\n[surface.floor]\ntemperature = \"900 K\""),
       "",
       {"has no emissivity"}},
      {"missing mesh",
       "[mesh]\nfile = \"nowhere.obj\"\n[defaults]\n" + ok,
       "",
       {"nowhere.obj", "not found"}},
      {"surface not in the mesh",
       cube_scene("[defaults]\n" + ok + "[surface.ceiling]\nemissivity = 0.9"),
       "",
       {"[surface.ceiling]", "not in the mesh", "floor, roof"}},
      {"unknown key",
       cube_scene("[defaults]\n" + ok + "[surface.floor]\nemisivity = 0.9"),
       "",
       {"unknown key 'emisivity'", "did you mean 'emissivity'"}},
      {"open scene without surroundings temperature",
       "[mesh]\nfile = \"open.obj\"\n[rays]\nper_patch = 2000\n[defaults]\n" + ok,
       "",
       {"the scene is open", "'floor'", "%", "[surroundings]"}},
      {"nothing fixes the temperature level",
       cube_scene("[rays]\nper_patch = 2000\n[defaults]\nemissivity = 0.5\nadiabatic = true\n"
                  "[surface.floor]\npower = \"1 kW\""),
       "",
       {"nothing fixes the temperature level"}},
      {"wall loss on a two-sided surface",
       cube_scene("[defaults]\n" + ok +
                  "[surface.roof]\ntwo_sided = true\nwall = { U = \"1 W/m2K\", outside = \"20 C\" "
                  "}"),
       "",
       {"surface 'roof' is two-sided and has a wall loss"}},
      {"convection without fluid",
       cube_scene("[defaults]\n" + ok + "[surface.floor]\nconvection = { h = \"8 W/m2K\" }"),
       "",
       {"needs both h and fluid"}},
      {"convection coefficient without unit",
       cube_scene("[defaults]\n" + ok +
                  "[surface.floor]\nconvection = { h = 8, fluid = \"20 C\" }"),
       "",
       {"h = 8 has no unit", "W/m2K"}},
      {"per_patch 0",
       cube_scene("[rays]\nper_patch = 0\n[defaults]\n" + ok),
       "",
       {"per_patch", "positive whole number"}},
      {"adiabatic = false",
       cube_scene("[defaults]\nemissivity = 0.5\nadiabatic = false"),
       "",
       {"adiabatic", "can only be true"}},
      {"wall given two ways",
       cube_scene("[defaults]\n" + ok +
                  "[surface.floor]\nwall = { U = \"1 W/m2K\", thickness = \"230 mm\", "
                  "conductivity = \"0.3 W/mK\", outside = \"20 C\" }"),
       "",
       {"'wall' of [surface.floor] must be"}},
      {"unknown length unit",
       "[mesh]\nfile = \"cube.obj\"\nunit = \"furlong\"\n[defaults]\n" + ok,
       "",
       {"furlong"}},
      {"surroundings below absolute zero",
       cube_scene("[surroundings]\ntemperature = \"-300 C\"\n[defaults]\n" + ok),
       "",
       {"[surroundings]", "below absolute zero"}},
      {"TOML syntax error", cube_scene("[defaults\nemissivity = 0.5"), "", {"scene.toml:"}},
      {"closed mesh whose normals point out",
       "[mesh]\nfile = \"flipped.obj\"\n[rays]\nper_patch = 2000\n[defaults]\n" + ok,
       "",
       {"most rays reaching surface(s) 'roof' (100.0 %) arrive on their back side",
        "Fix the normals first"}},
      {"closed mesh whose normals point out by design, no surroundings",
       "[mesh]\nfile = \"flipped.obj\"\n[rays]\nper_patch = 2000\n[defaults]\n" + ok +
           "\n[surface.roof]\nexpect_back_hits = true",
       "",
       {"is closed, yet", "'roof' 100.0 %", "normals"}},
      {"a bare mesh has no thermal input", "", "cube.obj", {"is a mesh", "emissivity"}},
      {"rays 0 on the command line", cube_scene(kGoodCube), "--rays 0", {"--rays"}},
      {"--cache with --no-cache",
       cube_scene(kGoodCube),
       "--cache " + (dir / "c").string() + " --no-cache",
       {"--no-cache"}},
      {"missing scene file", "", "nowhere.toml", {"nowhere.toml", "does not exist"}},
  };
  // The cube with its roof turned outwards: closed, yet a sixth of all rays leave.
  std::string flipped = unit_cube_obj();
  {
    const Scene cube = load_obj_text(flipped, "cube");
    REQUIRE(cube.find_surface("roof") == 1);
  }
  write_text(dir / "flipped.obj", [&] {
    // Reverse the winding of the roof group's faces.
    std::string out, line;
    std::istringstream in(flipped);
    bool in_roof = false;
    while (std::getline(in, line)) {
      if (line.rfind("g ", 0) == 0) in_roof = line == "g roof";
      if (in_roof && line.rfind("f ", 0) == 0) {
        std::istringstream f(line.substr(2));
        std::vector<std::string> v{std::istream_iterator<std::string>(f), {}};
        line = "f";
        for (auto it = v.rbegin(); it != v.rend(); ++it) line += " " + *it;
      }
      out += line + "\n";
    }
    return out;
  }());

  REQUIRE(cases.size() >= 15);
  for (const Case& c : cases) {
    INFO("case: " << c.what);
    std::string args = "solve ";
    if (!c.toml.empty()) {
      write_text(dir / "scene.toml", c.toml);
      args += (dir / "scene.toml").string() + " " + c.args;
    } else {
      args += (dir / c.args).string();
    }
    const CliResult r = run_cli(args + " --quiet", dir);
    INFO("stderr: " << r.err);
    CHECK(r.status == 2);
    CHECK(r.err.rfind("error:", 0) == 0);
    for (const std::string& e : c.expect) CHECK(r.err.find(e) != std::string::npos);
    CHECK(r.out.find("energy balance") == std::string::npos);  // nothing solved
  }
}

TEST_CASE("solve reports non-convergence with exit 4 and still writes its report", "[solve]") {
  // An open box whose floor must lose 50 kW while the walls are held at 300 K and the
  // surroundings are at 20 C: radiation cannot bring that much to it, so no temperature works.
  const ScratchDir dir("solve-nonconv");
  set_up_meshes(dir);
  write_text(dir / "scene.toml", R"([mesh]
file = "open.obj"
[rays]
per_patch = 5000
[surroundings]
temperature = "20 C"
[defaults]
emissivity = 0.5
temperature = "300 K"
[surface.floor]
emissivity = 0.9
power = "-50 kW"
)");
  const CliResult r =
      run_cli("solve " + (dir / "scene.toml").string() + " -o " + (dir / "out").string(), dir);
  CHECK(r.status == 4);
  CHECK(r.err.find("error: the exchange solve did not converge") != std::string::npos);
  CHECK(r.out.find("NOT CONVERGED") != std::string::npos);
  const json report = json::parse(slurp(dir / "out" / "report.json"));
  CHECK(report.at("solver").at("status") == "not_converged");
  CHECK(report.at("solver").at("message").get<std::string>().find("floor") != std::string::npos);
  // Every file says so: a column of surfaces.csv, field data of patches.vtu.
  const std::string csv = slurp(dir / "out" / "surfaces.csv");
  CHECK(csv.substr(0, csv.find('\n')).find(",converged") != std::string::npos);
  CHECK(csv.find(",yes\n") == std::string::npos);
  CHECK(csv.find(",no\n") != std::string::npos);
  // A picture drawn later from these results says so in its title.
  const CliResult pic =
      run_cli("render " + (dir / "scene.toml").string() + " --results " + (dir / "out").string() +
                  " --field temperature -o " + (dir / "t.png").string(),
              dir);
  CHECK(pic.status == 0);
  CHECK(pic.out.find("title: Temperature in \u00b0C, scene.toml \u2014 NOT CONVERGED, not an "
                     "answer") != std::string::npos);
  CHECK(slurp(dir / "out" / "patches.vtu")
            .find("Name=\"converged\" NumberOfTuples=\"1\" "
                  "format=\"ascii\">0<") != std::string::npos);
}

TEST_CASE("solve prints the table and writes surfaces.csv and report.json and view factors",
          "[solve]") {
  const ScratchDir dir("solve-outputs");
  set_up_meshes(dir);
  // A two-sided sheet in an open scene: the open box with a surroundings temperature; the
  // east wall made a two-sided sheet (both faces on one node).
  write_text(dir / "scene.toml", R"([mesh]
file = "open.obj"
[rays]
per_patch = 20_000
seed = 5
[surroundings]
temperature = "20 C"
[defaults]
emissivity = 0.9
temperature = "20 C"
[surface.floor]
emissivity = 0.85
heat_flux = "2 kW/m2"
convection = { h = "10 W/m2K", fluid = "20 C" }
wall = { U = "1.5 W/m2K", outside = "20 C" }
[surface.east]
two_sided = true
adiabatic = true
)");
  const CliResult r =
      run_cli("solve " + (dir / "scene.toml").string() + " -o " + (dir / "out").string(), dir);
  INFO(r.err);
  REQUIRE(r.status == 0);
  for (const char* word :
       {"floor", "east *", "energy balance", "converged", "caution:", "licensed practice", "W/m2",
        "fire", "burns", "carbon monoxide", "hot surfaces", "heat put in (gross)",
        "heat taken by loads and sinks", "outer case"}) {
    CHECK(r.out.find(word) != std::string::npos);
  }
  for (const char* file : {"surfaces.csv", "report.json", "view_factors.csv", "view_factors.json"})
    CHECK(fs::is_regular_file(dir / "out" / file));

  const json report = json::parse(slurp(dir / "out" / "report.json"));
  CHECK(report.at("tool") == "hearthray");
  for (const char* hazard :
       {"licensed practice", "fire", "burns", "carbon monoxide", "hot surfaces"})
    CHECK(report.at("caution").get<std::string>().find(hazard) != std::string::npos);
  CHECK(report.at("scene").at("surroundings_K").get<double>() == Approx(293.15));
  CHECK(report.at("view_factors").at("rays_per_patch") == 20000);
  CHECK(report.at("solver").at("status") == "converged");
  const json& surfaces = report.at("surfaces");
  REQUIRE(surfaces.size() == 5);
  const json& floor = surfaces.at(0);
  CHECK(floor.at("name") == "floor");
  // 2 kW/m2 on 1 m2 goes out by radiation, convection and the wall.
  CHECK(floor.at("heat_input_W").get<double>() == Approx(2000).epsilon(1e-9));
  CHECK(floor.at("net_W").get<double>() + floor.at("convection_W").get<double>() +
            floor.at("wall_loss_W").get<double>() ==
        Approx(2000).epsilon(1e-9));
  CHECK(floor.at("convection_W").get<double>() ==
        Approx(10 * (floor.at("temperature_K").get<double>() - 293.15)).epsilon(1e-9));
  const json& east = surfaces.at(4);
  CHECK(east.at("two_sided") == true);
  CHECK(east.at("area_m2").get<double>() == Approx(2.0));
  REQUIRE(east.at("faces").size() == 2);
  CHECK(east.at("net_W").get<double>() == Approx(east.at("faces")[0].at("net_W").get<double>() +
                                                 east.at("faces")[1].at("net_W").get<double>()));
  // Open scene: what the surfaces put in leaves to the surroundings.
  const json& b = report.at("balance");
  CHECK(b.at("heat_input_W").get<double>() ==
        Approx(b.at("convection_W").get<double>() + b.at("wall_loss_W").get<double>() +
               b.at("to_surroundings_W").get<double>())
            .margin(1e-9 * b.at("largest_W").get<double>()));

  CHECK(b.at("gross_input_W").get<double>() ==
        Approx(b.at("taken_by_loads_and_sinks_W").get<double>() +
               b.at("convection_W").get<double>() + b.at("wall_loss_W").get<double>() +
               b.at("to_surroundings_W").get<double>())
            .margin(1e-9 * b.at("largest_W").get<double>()));
  CHECK(b.at("sources").dump().find("floor") != std::string::npos);
  // The floor's wall loses 1.5 W/m2K times its excess over 20 C: its case is reported.
  const json& cases = report.at("outer_case").at("surfaces");
  REQUIRE(cases.size() == 1);
  CHECK(cases[0].at("surface") == "floor");
  CHECK(cases[0].at("temperature_K").get<double>() > 293.15);

  // surfaces.csv: one row per face (the two-sided east wall has two), header first.
  const std::string csv = slurp(dir / "out" / "surfaces.csv");
  CHECK(csv.rfind("surface,face,side,area_m2,emissivity,temperature_K", 0) == 0);
  CHECK(std::count(csv.begin(), csv.end(), '\n') == 1 + 6);
  CHECK(csv.find("east,east (back),back,") != std::string::npos);
  CHECK(csv.find(",yes\n") != std::string::npos);  // converged, on every row

  // render draws the solved fields from these files, titled with what, where and the status;
  // the same results on another scene's patches are refused.
  const std::string render = "render " + (dir / "scene.toml").string() + " --results " +
                             (dir / "out").string() + " -o " + (dir / "pic.png").string();
  for (const char* field : {"temperature", "net-flux", "irradiation"}) {
    const CliResult pic = run_cli(render + " --field " + field + " --units us", dir);
    INFO(pic.err);
    CHECK(pic.status == 0);
    CHECK(pic.out.find("(solve converged)") != std::string::npos);
  }
  CHECK(run_cli(render + " --field temperature", dir).out.find("title: Temperature in \u00b0C") !=
        std::string::npos);
  write_text(dir / "other.toml", cube_scene(kGoodCube));
  const CliResult other =
      run_cli("render " + (dir / "other.toml").string() + " --results " + (dir / "out").string() +
                  " --field temperature -o " + (dir / "pic.png").string(),
              dir);
  CHECK(other.status == 2);
  CHECK(other.err.find("from another scene or patching") != std::string::npos);
  CHECK(csv.find(",no\n") == std::string::npos);
}

TEST_CASE("solve reports a hot outer case where a wall loses much heat", "[solve]") {
  // The floor of the open box held at 500 C behind a wall of U = 5 W/m2K to a 20 C room loses
  // 2.4 kW/m2; no film of still air and radiation (~15 W/m2K together) takes that below about
  // 150 C: far above the 65 C at which bare metal burns on touch (ISO 13732-1, recalled).
  const ScratchDir dir("solve-hot-case");
  set_up_meshes(dir);
  write_text(dir / "scene.toml", R"([mesh]
file = "open.obj"
[rays]
per_patch = 5000
[surroundings]
temperature = "20 C"
[defaults]
emissivity = 0.9
adiabatic = true
[surface.floor]
temperature = "500 C"
wall = { U = "5 W/m2K", outside = "20 C" }
[surface.north]
wall = { U = "0.05 W/m2K", outside = "20 C" }
)");
  const CliResult r =
      run_cli("solve " + (dir / "scene.toml").string() + " -o " + (dir / "out").string(), dir);
  INFO(r.err);
  REQUIRE(r.status == 0);
  CHECK(r.out.find("WARNING: burns on a touch") != std::string::npos);
  CHECK(r.out.find("Churchill & Chu") != std::string::npos);
  const json report = json::parse(slurp(dir / "out" / "report.json"));
  const json& cases = report.at("outer_case").at("surfaces");
  REQUIRE(cases.size() == 2);
  CHECK(cases[0].at("surface") == "floor");
  CHECK(cases[0].at("wall_loss_flux_W_m2").get<double>() == Approx(5 * 480).epsilon(1e-9));
  CHECK(cases[0].at("temperature_C").get<double>() > 150);
  CHECK(cases[0].at("hot_to_touch") == true);
  CHECK(cases[1].at("surface") == "north");
  CHECK(cases[1].at("hot_to_touch") == false);
  CHECK(report.at("outer_case").at("touch_thresholds").get<std::string>().find("ISO 13732-1") !=
        std::string::npos);
}

TEST_CASE("solve reuses cached view factors and misses on a changed setting or mesh", "[solve]") {
  const ScratchDir dir("solve-cache");
  set_up_meshes(dir);
  const std::string scene = (dir / "scene.toml").string();
  auto solve = [&](const std::string& toml, const std::string& out, const std::string& extra) {
    write_text(dir / "scene.toml", toml);
    const CliResult r = run_cli("solve " + scene + " -o " + (dir / out).string() + extra, dir);
    INFO(r.err);
    REQUIRE(r.status == 0);
    return r;
  };
  auto report = [&](const std::string& out) {
    return json::parse(slurp(dir / out / "report.json"));
  };

  CliResult r = solve(cube_scene(kGoodCube), "first", "");
  CHECK(r.out.find("view factors: traced") != std::string::npos);
  CHECK(report("first").at("view_factors").at("seconds").is_number());
  const std::string cache_file = report("first").at("view_factors").at("cache_file");
  CHECK(fs::path(cache_file).parent_path() == fs::path(dir.cache()));
  REQUIRE(fs::is_regular_file(cache_file));

  // Only a temperature changed: the factors come from the cache, identical to the bit.
  std::string warmer = cube_scene(kGoodCube);
  warmer.replace(warmer.find("1000 K"), 6, "1100 K");
  r = solve(warmer, "second", "");
  CHECK(r.out.find("view factors: from cache " + cache_file) != std::string::npos);
  CHECK(report("second").at("view_factors").at("seconds") == "cache");
  CHECK(slurp(dir / "second" / "view_factors.csv") == slurp(dir / "first" / "view_factors.csv"));
  CHECK(report("second").at("surfaces")[0].at("temperature_K").get<double>() == 1100);

  // More rays: another key, traced again.
  r = solve(cube_scene(kGoodCube), "rays", " --rays 30000");
  CHECK(r.out.find("view factors: traced") != std::string::npos);
  CHECK(report("rays").at("view_factors").at("cache_file") != cache_file);
  // Another seed, likewise.
  r = solve(cube_scene(kGoodCube), "seed", " --seed 2");
  CHECK(r.out.find("view factors: traced") != std::string::npos);

  // The mesh file's bytes changed (a comment only): never served from the old entry.
  write_text(dir / "cube.obj", unit_cube_obj() + "# edited\n");
  r = solve(cube_scene(kGoodCube), "mesh", "");
  CHECK(r.out.find("view factors: traced") != std::string::npos);
  write_text(dir / "cube.obj", unit_cube_obj());

  // A damaged cache file is ignored, traced again, and rewritten.
  {
    std::string bytes = slurp(cache_file);
    REQUIRE(bytes.size() > 200);
    bytes[bytes.size() - 20] = static_cast<char>(bytes[bytes.size() - 20] ^ 0x5a);
    write_text(cache_file, bytes);
  }
  r = solve(cube_scene(kGoodCube), "damaged", "");
  CHECK(r.out.find("view factors: traced") != std::string::npos);
  CHECK(r.err.find("warning: ignored the cache file") != std::string::npos);
  CHECK(slurp(dir / "damaged" / "view_factors.csv") == slurp(dir / "first" / "view_factors.csv"));
  r = solve(cube_scene(kGoodCube), "repaired", "");
  CHECK(r.out.find("view factors: from cache") != std::string::npos);

  // A truncated file likewise.
  {
    const std::string bytes = slurp(cache_file);
    write_text(cache_file, bytes.substr(0, bytes.size() / 2));
  }
  r = solve(cube_scene(kGoodCube), "truncated", "");
  CHECK(r.out.find("view factors: traced") != std::string::npos);

  // --no-cache traces and leaves the cache alone; --cache DIR uses another folder.
  r = solve(cube_scene(kGoodCube), "nocache", " --no-cache");
  CHECK(r.out.find("view factors: traced") != std::string::npos);
  CHECK(report("nocache").at("view_factors").at("cache_file").is_null());
  const std::string other = (dir / "other-cache").string();
  r = solve(cube_scene(kGoodCube), "other", " --cache " + other);
  CHECK(r.out.find("stored in cache " + other) != std::string::npos);
}

TEST_CASE("solve writes a large matrix as HDF5, or as Matrix Market text when asked", "[solve]") {
  const ScratchDir dir("solve-hdf5");
  set_up_meshes(dir);
  // 6 faces x 64 patches of 0.125 m: 384 patches, above the 200 of the dense files.
  write_text(dir / "scene.toml",
             cube_scene("[rays]\nper_patch = 500\n[defaults]\nemissivity = 0.9\n"
                        "temperature = \"20 C\"\npatches = \"0.125 m\"\n"
                        "[surface.floor]\ntemperature = \"300 C\"\n"));
  const std::string base = "solve " + (dir / "scene.toml").string() + " --quiet -o ";
  const CliResult r = run_cli(base + (dir / "binary").string(), dir);
  INFO(r.err);
  REQUIRE(r.status == 0);
  // The HDF5 signature (HDF5 File Format Specification, "Format Signature").
  const std::string h5 = slurp(dir / "binary" / "view_factors.h5");
  CHECK(h5.substr(0, 8) == std::string("\x89HDF\r\n\x1a\n", 8));
  CHECK(!fs::exists(dir / "binary" / "view_factors.mtx"));
  CHECK(!fs::exists(dir / "binary" / "view_factors.csv"));
  const std::string table = slurp(dir / "binary" / "patches.csv");
  CHECK(std::count(table.begin(), table.end(), '\n') == 385);  // header and 384 patches
  const CliResult text = run_cli(base + (dir / "text").string() + " --matrix-text", dir);
  REQUIRE(text.status == 0);
  CHECK(slurp(dir / "text" / "view_factors.mtx").rfind("%%MatrixMarket", 0) == 0);
  CHECK(!fs::exists(dir / "text" / "view_factors.h5"));
  // Compressed binary against shortest-text Matrix Market: the binary file is the smaller one
  // although it also holds the standard errors and the geometry.
  CHECK(h5.size() < slurp(dir / "text" / "view_factors.mtx").size());
}
