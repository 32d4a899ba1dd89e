// Scene files: keys, quantities with units, defaults, and a clear error (file, line, what to
// write) for every kind of bad input.
#include <atomic>
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <random>
#include <string>

#include "hearthray/error.hpp"
#include "hearthray/scene_file.hpp"

using namespace hearthray;
namespace fs = std::filesystem;

namespace {

class SceneDir {
 public:
  SceneDir() {
    static std::atomic<int> counter{0};
    std::random_device rd;
    path_ = fs::temp_directory_path() /
            ("hearthray_scene_file_test_" + std::to_string(rd()) + "_" + std::to_string(counter++));
    fs::create_directories(path_);
    // Four named surfaces: a floor, a wall, a door and a free-standing panel.
    write("kiln.obj",
          "v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nv 0 0 1\nv 1 0 1\nv 0.5 0.5 0.5\nv 0.6 0.5 0.5\n"
          "v 0.5 0.6 0.5\n"
          "g hearth\nf 1 2 3 4\n"
          "g wall\nf 1 2 6 5\n"
          "g door\nf 2 3 6\n"
          "g panel\nf 7 8 9\n");
  }
  ~SceneDir() {
    std::error_code ec;
    fs::remove_all(path_, ec);
  }
  std::string write(const std::string& name, const std::string& text) const {
    std::ofstream((path_ / name).string()) << text;
    return (path_ / name).string();
  }
  // scene.toml: lines 1-2 name the mesh, `body` starts on line 3.
  std::string scene(const std::string& body) const {
    return write("scene.toml", "[mesh]\nfile = \"kiln.obj\"\n" + body);
  }
  const fs::path& path() const { return path_; }

 private:
  fs::path path_;
};

}  // namespace

TEST_CASE("quantities convert to SI", "[scene_file]") {
  // 0 C = 273.15 K by definition of the Celsius scale; F = C * 9/5 + 32, so -40 F = -40 C.
  CHECK(parse_temperature("1250 C", "t") == Approx(1523.15));
  CHECK(parse_temperature("1250 °C", "t") == Approx(1523.15));
  CHECK(parse_temperature("900 K", "t") == 900.0);
  CHECK(parse_temperature("-40 F", "t") == Approx(parse_temperature("-40 C", "t")));
  CHECK(parse_temperature("212 F", "t") == Approx(373.15));
  CHECK(parse_temperature(" 20C ", "t") == Approx(293.15));
  CHECK(parse_power("1200 W", "p") == 1200.0);
  CHECK(parse_power("1.5 kW", "p") == Approx(1500.0));
  CHECK(parse_power("2 MW", "p") == Approx(2e6));
  CHECK(parse_power("-300 W", "p") == -300.0);  // heat taken out is allowed
  CHECK(parse_heat_flux("350 W/m2", "q") == 350.0);
  CHECK(parse_heat_flux("2 kW/m2", "q") == Approx(2000.0));
  CHECK(parse_heat_flux("350 W/m²", "q") == 350.0);
  for (const char* h : {"6 W/m2K", "6 W/(m2 K)", "6 W/m2/K", "6 W/(m²·K)", "6 W/m^2K"}) {
    CHECK(parse_heat_transfer_coefficient(h, "h") == 6.0);
  }
  CHECK(parse_length("230 mm", "d") == Approx(0.23));
  CHECK(parse_length("1 in", "d") == Approx(0.0254));
  CHECK(parse_length("2 ft", "d") == Approx(0.6096));
  CHECK(parse_conductivity("0.3 W/mK", "k") == Approx(0.3));
  CHECK(parse_conductivity("0.3 W/(m K)", "k") == Approx(0.3));
  CHECK(parse_conductivity("1.5e-1 W/m/K", "k") == Approx(0.15));
}

TEST_CASE("quantities without a fitting unit are errors saying what to write", "[scene_file]") {
  CHECK_THROWS_WITH(parse_temperature("1250", "temperature"),
                    Catch::Contains("write temperature = \"1250 C\" (units: C, K, F)"));
  CHECK_THROWS_WITH(
      parse_temperature("5 kW", "temperature"),
      Catch::Contains("'kW' is not a unit of temperature") && Catch::Contains("C, K, F"));
  CHECK_THROWS_WITH(parse_temperature("-5 K", "temperature"),
                    Catch::Contains("below absolute zero"));
  CHECK_THROWS_WITH(parse_temperature("-300 C", "temperature"),
                    Catch::Contains("below absolute zero"));
  CHECK_THROWS_WITH(parse_temperature("hot", "temperature"),
                    Catch::Contains("does not start with a number"));
  CHECK_THROWS_WITH(parse_power("1200 C", "power"),
                    Catch::Contains("not a unit of power") && Catch::Contains("W, kW, MW"));
  CHECK_THROWS_WITH(parse_heat_flux("350 W", "heat_flux"), Catch::Contains("W/m2, kW/m2"));
  CHECK_THROWS_WITH(parse_heat_transfer_coefficient("-1 W/m2K", "h"), Catch::Contains("negative"));
  CHECK_THROWS_WITH(parse_length("3 yd", "thickness"), Catch::Contains("mm, cm, m, in, ft"));
  CHECK_THROWS_WITH(parse_conductivity("0 W/mK", "conductivity"), Catch::Contains("positive"));
}

TEST_CASE("a complete scene file is read", "[scene_file]") {
  SceneDir dir;
  const std::string path = dir.scene(
      "unit = \"m\"\n"
      "surfaces_from = \"groups\"\n"
      "[rays]\nper_patch = 200_000\nseed = 7\n"
      "[surroundings]\ntemperature = \"20 C\"\n"
      "[defaults]\nemissivity = 0.9\n"
      "wall = { thickness = \"230 mm\", conductivity = \"0.3 W/mK\", outside = \"20 C\" }\n"
      "[surface.wall]\nadiabatic = true\n"
      "[surface.panel]\ntwo_sided = true\nemissivity = 0.95\npower = \"1.5 kW\"\n"
      "convection = { h = \"6 W/(m2 K)\", fluid = \"21 C\" }\n"
      "[surface.hearth]\nemissivity = 1\ntemperature = \"1250 C\"\n"
      "[surface.door]\nheat_flux = \"2 kW/m2\"\nwall = { U = \"0.9 W/m2K\", outside = \"0 C\" }\n");
  const SceneFile file = open_scene(path);
  CHECK(file.path == path);
  CHECK(fs::equivalent(file.mesh_path, dir.path() / "kiln.obj"));
  CHECK(file.rays_per_patch == 200000u);
  CHECK(file.seed == 7u);
  REQUIRE(file.surroundings_K);
  CHECK(*file.surroundings_K == Approx(293.15));
  CHECK(file.has_thermal_input());
  // In file order, not alphabetical.
  REQUIRE(file.surfaces.size() == 4);
  CHECK(file.surfaces[0].first == "wall");
  CHECK(file.surfaces[1].first == "panel");
  CHECK(file.surfaces[3].first == "door");
  CHECK(file.surfaces[1].second.line == 15);

  const Scene scene = load_scene(file);
  CHECK(scene.surfaces[static_cast<std::size_t>(scene.find_surface("panel"))].two_sided);
  CHECK_FALSE(scene.surfaces[static_cast<std::size_t>(scene.find_surface("wall"))].two_sided);

  const std::vector<SurfaceThermal> thermal = resolve_thermal(file, scene);
  REQUIRE(thermal.size() == scene.surfaces.size());
  auto of = [&](const char* name) {
    return thermal[static_cast<std::size_t>(scene.find_surface(name))];
  };
  CHECK(of("hearth").emissivity == 1.0);
  CHECK(of("hearth").condition.kind == ConditionKind::temperature);
  CHECK(of("hearth").condition.value == Approx(1523.15));
  CHECK(of("wall").emissivity == 0.9);  // from [defaults]
  CHECK(of("wall").condition.kind == ConditionKind::adiabatic);
  // Plain wall: U = k / thickness = 0.3 / 0.23 W/(m2 K), from [defaults].
  REQUIRE(of("wall").condition.wall_loss);
  CHECK(of("wall").condition.wall_loss->U == Approx(0.3 / 0.23));
  CHECK(of("wall").condition.wall_loss->outside_K == Approx(293.15));
  // The surface's own wall wins over [defaults].
  CHECK(of("door").condition.wall_loss->U == Approx(0.9));
  CHECK(of("door").condition.value == Approx(2000.0));
  CHECK(of("panel").condition.kind == ConditionKind::power);
  CHECK(of("panel").condition.value == Approx(1500.0));
  REQUIRE(of("panel").condition.convection);
  CHECK(of("panel").condition.convection->h == 6.0);
  CHECK(of("panel").condition.convection->fluid_K == Approx(294.15));
  // A two-sided sheet has no outside: the default wall does not apply to it.
  CHECK_FALSE(of("panel").condition.wall_loss);
}

TEST_CASE("a bare mesh opens with defaults", "[scene_file]") {
  SceneDir dir;
  const SceneFile file = open_scene((dir.path() / "kiln.obj").string());
  CHECK(file.path.empty());
  CHECK_FALSE(file.has_thermal_input());
  CHECK(file.mesh.unit == LengthUnit::m);
  CHECK(load_scene(file).surfaces.size() == 4);
  CHECK_THROWS_WITH(resolve_thermal(file, load_scene(file)),
                    Catch::Contains("'hearth' has no emissivity") && Catch::Contains("[defaults]"));
}

TEST_CASE("bad values in a scene file are errors naming file, line and key", "[scene_file]") {
  SceneDir dir;
  auto read = [&](const std::string& body) { return read_scene_file(dir.scene(body)); };
  CHECK_THROWS_WITH(read("[surface.hearth]\nemissivity = 0\n"),
                    Catch::Contains("scene.toml:4:") && Catch::Contains("(0, 1]") &&
                        Catch::Contains("[surface.hearth]"));
  CHECK_THROWS_WITH(read("[surface.hearth]\nemissivity = 1.2\n"),
                    Catch::Contains("scene.toml:4:") && Catch::Contains("(0, 1]"));
  CHECK_THROWS_WITH(read("[surface.hearth]\nemissivity = \"0.8\"\n"),
                    Catch::Contains("must be a number") && Catch::Contains("a string"));
  CHECK_THROWS_WITH(read("[surface.hearth]\ntemperature = \"-5 K\"\n"),
                    Catch::Contains("scene.toml:4:") && Catch::Contains("below absolute zero"));
  CHECK_THROWS_WITH(read("[surface.hearth]\ntemperature = \"1250 C\"\npower = \"3 kW\"\n"),
                    Catch::Contains("both 'temperature' and 'power'"));
  CHECK_THROWS_WITH(read("[surface.hearth]\nadiabatic = true\nheat_flux = \"3 kW/m2\"\n"),
                    Catch::Contains("both 'heat_flux' and 'adiabatic'"));
  CHECK_THROWS_WITH(read("[surface.hearth]\ntemperature = \"5 kW\"\n"),
                    Catch::Contains("scene.toml:4:") &&
                        Catch::Contains("not a unit of temperature") && Catch::Contains("C, K, F"));
  CHECK_THROWS_WITH(read("[surface.hearth]\ntemperature = 1250\n"),
                    Catch::Contains("scene.toml:4:") &&
                        Catch::Contains("write temperature = \"1250 C\" (units: C, K, F)"));
  CHECK_THROWS_WITH(read("[surface.hearth]\npower = \"1200\"\n"),
                    Catch::Contains("has no unit") && Catch::Contains("W, kW, MW"));
  CHECK_THROWS_WITH(read("[surface.hearth]\nadiabatic = false\n"),
                    Catch::Contains("adiabatic = true"));
  CHECK_THROWS_WITH(read("[surface.hearth]\ntwo_sided = \"yes\"\n"),
                    Catch::Contains("two_sided") && Catch::Contains("true or false"));
  CHECK_THROWS_WITH(read("[rays]\nper_patch = 0\n"),
                    Catch::Contains("scene.toml:4:") && Catch::Contains("positive whole number"));
  CHECK_THROWS_WITH(read("[rays]\nper_patch = 2e5\n"), Catch::Contains("per_patch"));
  CHECK_THROWS_WITH(read("[rays]\nseed = -1\n"), Catch::Contains("non-negative whole number"));
  CHECK_THROWS_WITH(read("[rays]\nsampler = \"halton\"\n"),
                    Catch::Contains("sampler in [rays] is 'halton'") && Catch::Contains("sobol"));
  CHECK(read("[rays]\nsampler = \"stratified\"\n").sampler == EmissionSampler::stratified);
  CHECK(read("[rays]\nsampler = \"sobol\"\n").sampler == EmissionSampler::sobol);
  CHECK_FALSE(read("[rays]\nseed = 3\n").sampler.has_value());
  CHECK_THROWS_WITH(read("unit = \"yd\"\n"),
                    Catch::Contains("scene.toml:3:") && Catch::Contains("mm, cm, m, in, ft"));
  CHECK_THROWS_WITH(read("surfaces_from = \"names\"\n"),
                    Catch::Contains("\"groups\"") && Catch::Contains("\"materials\""));
  CHECK_THROWS_WITH(read("[surroundings]\ntemperature = \"20\"\n"),
                    Catch::Contains("[surroundings]") && Catch::Contains("has no unit"));
}

TEST_CASE("unknown and misspelled keys are errors", "[scene_file]") {
  SceneDir dir;
  auto read = [&](const std::string& body) { return read_scene_file(dir.scene(body)); };
  CHECK_THROWS_WITH(read("[surface.hearth]\nemissivity = 0.8\nemisivity = 0.8\n"),
                    Catch::Contains("scene.toml:5: unknown key 'emisivity' in [surface.hearth]") &&
                        Catch::Contains("did you mean 'emissivity'") &&
                        Catch::Contains("expected one of two_sided, emissivity"));
  CHECK_THROWS_WITH(read("[ray]\nseed = 1\n"),
                    Catch::Contains("unknown key 'ray'") && Catch::Contains("did you mean 'rays'"));
  CHECK_THROWS_WITH(read("units = \"mm\"\n"),
                    Catch::Contains("scene.toml:3:") && Catch::Contains("'units' in [mesh]"));
  CHECK_THROWS_WITH(
      read("[rays]\ntarget_eror = 0.01\n"),
      Catch::Contains("'target_eror' in [rays]") && Catch::Contains("did you mean 'target_error'"));
  CHECK_THROWS_WITH(
      read("[defaults]\ntwo_sided = true\n"),
      Catch::Contains("'two_sided' in [defaults]") && Catch::Contains("set per surface"));
  CHECK_THROWS_WITH(read("[surface.panel]\nconvection = { h = \"6 W/m2K\", fluid = \"20 C\", "
                         "speed = 2 }\n"),
                    Catch::Contains("'speed'") && Catch::Contains("convection"));
  CHECK_THROWS_WITH(
      read_scene_file(dir.write("scene.toml",
                                "surface = { hearth = 3 }\n[mesh]\n"
                                "file = \"kiln.obj\"\n")),
      Catch::Contains("scene.toml:1:") && Catch::Contains("surface.hearth must be a table"));
}

TEST_CASE("convection and wall take exactly their forms", "[scene_file]") {
  SceneDir dir;
  auto read = [&](const std::string& body) { return read_scene_file(dir.scene(body)); };
  CHECK_THROWS_WITH(read("[surface.panel]\nconvection = { h = \"6 W/m2K\" }\n"),
                    Catch::Contains("needs both h and fluid"));
  CHECK_THROWS_WITH(read("[surface.panel]\nconvection = { h = 6.0, fluid = \"20 C\" }\n"),
                    Catch::Contains("scene.toml:4:") && Catch::Contains("write h = \"6 W/m2K\""));
  CHECK_THROWS_WITH(read("[surface.wall]\nwall = { U = \"1 W/m2K\", thickness = \"200 mm\", "
                         "conductivity = \"1 W/mK\", outside = \"20 C\" }\n"),
                    Catch::Contains("'wall' of [surface.wall] must be wall = { U ="));
  CHECK_THROWS_WITH(read("[surface.wall]\nwall = { U = \"1 W/m2K\" }\n"),
                    Catch::Contains("outside"));
  CHECK_THROWS_WITH(read("[surface.wall]\nwall = { thickness = \"0 mm\", conductivity = "
                         "\"1 W/mK\", outside = \"20 C\" }\n"),
                    Catch::Contains("thickness") && Catch::Contains("positive"));
  CHECK_THROWS_WITH(
      read("[surface.wall]\nwall = { thickness = \"230 mm\", conductivity = "
           "\"0.3 W/m2K\", outside = \"20 C\" }\n"),
      Catch::Contains("not a unit of thermal conductivity") && Catch::Contains("W/mK"));
}

TEST_CASE("bad files and names are errors naming them", "[scene_file]") {
  SceneDir dir;
  CHECK_THROWS_WITH(read_scene_file((dir.path() / "nope.toml").string()),
                    Catch::Contains("nope.toml") && Catch::Contains("does not exist"));
  // A TOML syntax error carries the parser's line.
  CHECK_THROWS_WITH(read_scene_file(dir.scene("[surface.hearth\nemissivity = 0.8\n")),
                    Catch::Contains("scene.toml:3:"));
  CHECK_THROWS_WITH(read_scene_file(dir.write("scene.toml", "[rays]\nseed = 1\n")),
                    Catch::Contains("no mesh given") && Catch::Contains("[mesh]"));
  const std::string lost = dir.write("scene.toml", "[mesh]\nfile = \"meshes/lost.obj\"\n");
  CHECK_THROWS_WITH(read_scene_file(lost),
                    Catch::Contains("scene.toml:2:") && Catch::Contains("'meshes/lost.obj'") &&
                        Catch::Contains((dir.path() / "meshes" / "lost.obj").string()));
  // A surface the mesh does not have: the message lists those it has.
  const SceneFile file = read_scene_file(dir.scene("[surface.roof]\nemissivity = 0.8\n"));
  CHECK_THROWS_WITH(load_scene(file), Catch::Contains("scene.toml:3:") &&
                                          Catch::Contains("[surface.roof]") &&
                                          Catch::Contains("hearth, wall, door, panel"));
}

TEST_CASE("thermal settings resolve per surface or say what is missing", "[scene_file]") {
  SceneDir dir;
  auto resolve = [&](const std::string& body) {
    const SceneFile file = read_scene_file(dir.scene(body));
    return resolve_thermal(file, load_scene(file));
  };
  CHECK_THROWS_WITH(resolve("[defaults]\nadiabatic = true\n[surface.door]\nemissivity = 0.8\n"),
                    Catch::Contains("'hearth' has no emissivity") &&
                        Catch::Contains("[surface.hearth]") && Catch::Contains("[defaults]"));
  CHECK_THROWS_WITH(resolve("[defaults]\nemissivity = 0.8\n[surface.door]\nadiabatic = true\n"),
                    Catch::Contains("'hearth' has no condition") && Catch::Contains("[defaults]"));
  CHECK_THROWS_WITH(resolve("[defaults]\nemissivity = 0.8\nadiabatic = true\n"
                            "[surface.panel]\ntwo_sided = true\n"
                            "wall = { U = \"1 W/m2K\", outside = \"20 C\" }\n"),
                    Catch::Contains("scene.toml:6:") && Catch::Contains("'panel' is two-sided") &&
                        Catch::Contains("no outside"));
  // Spec over defaults: the surface's own condition and emissivity replace the defaults.
  const auto ok = resolve(
      "[defaults]\nemissivity = 0.8\nadiabatic = true\n"
      "[surface.door]\nemissivity = 0.5\ntemperature = \"900 K\"\n");
  CHECK(ok[2].emissivity == 0.5);
  CHECK(ok[2].condition.kind == ConditionKind::temperature);
  CHECK(ok[0].emissivity == 0.8);
  CHECK(ok[0].condition.kind == ConditionKind::adiabatic);
}

TEST_CASE("patch sizes and ray budgets are read per surface and by default", "[scene_file]") {
  SceneDir dir;
  const SceneFile file = read_scene_file(dir.scene(R"([rays]
total = 2_000_000
min_per_patch = 500
[defaults]
patches = "250 mm"
[surface.wall]
patches = "triangles"
[surface.door]
patches = "whole"
)"));
  REQUIRE(file.rays_total);
  CHECK(*file.rays_total == 2000000);
  CHECK(*file.rays_min_per_patch == 500);
  const Scene scene = load_scene(file);
  const std::vector<PatchSpec> specs = patch_specs(file, scene);
  auto spec_of = [&](const std::string& name) {
    return specs[static_cast<std::size_t>(scene.find_surface(name))];
  };
  CHECK(spec_of("hearth").mode == PatchSpec::Mode::size);
  CHECK(spec_of("hearth").size == Approx(0.25));
  CHECK(spec_of("wall").mode == PatchSpec::Mode::per_triangle);
  CHECK(spec_of("door").mode == PatchSpec::Mode::whole);
}

TEST_CASE("bad patch and budget settings are errors saying what to write", "[scene_file]") {
  SceneDir dir;
  struct Case {
    std::string body, expect;
  };
  const std::vector<Case> cases = {
      {"[surface.wall]\npatches = \"small\"\n", "\"triangles\""},
      {"[surface.wall]\npatches = 0.25\n", "must be a string"},
      {"[surface.wall]\npatches = \"-1 m\"\n", "0.25 m"},
      {"[surface.wall]\npatches = \"3 kW\"\n", "0.25 m"},
      {"[rays]\nper_patch = 1000\ntotal = 5000\n", "both per_patch and total"},
      {"[rays]\nmin_per_patch = 10\n", "goes with total"},
      {"[rays]\ntotal = 0\n", "positive"},
      {"[rays]\ntarget_error = 0\n", "out of range"},
      {"[rays]\ntarget_error = 0.7\n", "out of range"},
      {"[rays]\ntarget_error = -0.001\n", "out of range"},
      {"[rays]\ntarget_error = \"small\"\n", "not a plain number"},
      {"[rays]\ntarget_error = \"150 %\"\n", "out of range"},
      {"[rays]\ntarget_error = \"0.5 %%\"\n", "not a plain number"},
      {"[rays]\ntarget_error = true\n", "must be a number"},
      {"[rays]\ntotal = 5000\ntarget_error = 0.01\n", "both total and target_error"},
      {"[rays]\nmax_per_patch = 1000\n", "give target_error too"},
      {"[rays]\ntime_limit = \"1 h\"\n", "give target_error too"},
      {"[rays]\ntarget_error = 0.01\nmax_per_patch = 0\n", "positive"},
      {"[rays]\ntarget_error = 0.01\ntime_limit = \"10\"\n", "has no unit"},
      {"[rays]\ntarget_error = 0.01\ntime_limit = \"3 kW\"\n", "not a unit of time"},
      {"[rays]\ntarget_error = 0.01\ntime_limit = \"0 s\"\n", "above zero"},
      {"[rays]\ntarget_error = 0.01\ntime_limit = 600\n", "must be a string"},
  };
  for (const Case& c : cases) {
    INFO(c.body);
    CHECK_THROWS_WITH(read_scene_file(dir.scene(c.body)), Catch::Contains(c.expect));
  }
}

TEST_CASE("a target error and its caps are read from [rays]", "[scene_file]") {
  SceneDir dir;
  const SceneFile f = read_scene_file(
      dir.scene("[rays]\nper_patch = 4096\ntarget_error = 0.001\nmax_per_patch = 4_000_000\n"
                "time_limit = \"10 min\"\n"));
  CHECK(f.rays_per_patch == std::uint64_t{4096});
  CHECK(f.target_error == 0.001);
  CHECK(f.target_max_per_patch == std::uint64_t{4000000});
  CHECK(f.target_time_limit_s == 600.0);
  CHECK(read_scene_file(dir.scene("[rays]\ntarget_error = \"0.002\"\n")).target_error == 0.002);
  const SceneFile plain = read_scene_file(dir.scene("[rays]\nper_patch = 4096\n"));
  CHECK_FALSE(plain.target_error);
  CHECK_FALSE(plain.target_max_per_patch);
}

TEST_CASE("a default wall or convection can be switched off per surface", "[scene_file]") {
  SceneDir dir;
  const SceneFile file =
      read_scene_file(dir.scene("[defaults]\nemissivity = 0.8\nadiabatic = true\n"
                                "wall = { U = \"1 W/m2K\", outside = \"20 C\" }\n"
                                "convection = { h = \"5 W/m2K\", fluid = \"400 C\" }\n"
                                "[surface.door]\nwall = false\nconvection = false\n"
                                "[surface.panel]\ntwo_sided = true\n"));
  const Scene scene = load_scene(file);
  const std::vector<SurfaceThermal> thermal = resolve_thermal(file, scene);
  // hearth, wall, door, panel: the door takes neither default, the two-sided panel no wall.
  CHECK(thermal[0].condition.wall_loss);
  CHECK(thermal[0].condition.convection);
  CHECK_FALSE(thermal[2].condition.wall_loss);
  CHECK_FALSE(thermal[2].condition.convection);
  CHECK_FALSE(thermal[3].condition.wall_loss);
  const std::vector<std::string> lines = defaults_taken(file, scene);
  REQUIRE(lines.size() == 4);
  CHECK(lines[0] ==
        "[defaults] emissivity = 0.8: taken by hearth, wall, door, panel (4 of 4 "
        "surfaces)");
  CHECK(lines[2] ==
        "[defaults] convection (h = 5 W/m2K, fluid 400 C): taken by hearth, wall, "
        "panel (3 of 4 surfaces); switched off by convection = false in door");
  CHECK(lines[3] ==
        "[defaults] wall (U = 1 W/m2K, outside 20 C; two-sided sheets take none): "
        "taken by hearth, wall (2 of 4 surfaces); switched off by wall = false in "
        "door");
  // A default every surface overrides is named as taken by none.
  const SceneFile overridden = read_scene_file(dir.scene(
      "[defaults]\nemissivity = 0.8\n[surface.hearth]\nemissivity = 0.7\n[surface.wall]\n"
      "emissivity = 0.7\n[surface.door]\nemissivity = 0.7\n[surface.panel]\nemissivity = 0.7\n"));
  const std::vector<std::string> none = defaults_taken(overridden, load_scene(overridden));
  REQUIRE(none.size() == 1);
  CHECK(none[0] == "[defaults] emissivity = 0.8: taken by none of the 4 surfaces");
  // true means nothing, and false belongs to a surface, not to [defaults].
  CHECK_THROWS_WITH(read_scene_file(dir.scene("[surface.door]\nwall = true\n")),
                    Catch::Contains("scene.toml:4:") && Catch::Contains("wall = true") &&
                        Catch::Contains("wall = false to take none from [defaults]"));
  CHECK_THROWS_WITH(read_scene_file(dir.scene("[defaults]\nconvection = false\n")),
                    Catch::Contains("leave convection out of [defaults]"));
  CHECK_THROWS_WITH(read_scene_file(dir.scene("[surface.door]\nexpect_back_hits = 1\n")),
                    Catch::Contains("expect_back_hits") && Catch::Contains("true or false"));
}
