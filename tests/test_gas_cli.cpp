// `hearthray solve` on a scene with a [gas] table: tables, files, a balance that closes, and
// bad gas input refused with `error:` and exit 2.
#include <catch2/catch.hpp>
#include <cmath>
#include <nlohmann/json.hpp>

#include "support/cli_run.hpp"
#include "support/gas_fixtures.hpp"

using namespace hearthray::testing;

namespace {

// An invented fired box (3 x 1.2 x 1.2 m, metres) with a solid load held at 700 C.
const char* kScene = R"([mesh]
file = "box.obj"
unit = "m"

[rays]
per_patch = 20_000
seed = 3

[defaults]
emissivity = 0.75
adiabatic = true
wall = { U = "1.2 W/m2K", outside = "20 C" }

[surface.load]
emissivity = 0.85
temperature = "700 C"

[gas]
cells = [3, 1, 1]
rays_per_cell = 20_000
flow = "+x"
release = [0.8, 0.2]
load = ["load"]

[gas.firing]
fuel = "propane"
rate = "200 kW"
flue_o2 = "3 %"
air_temperature = "150 C"
)";

}  // namespace

TEST_CASE("hearthray solve runs a fired scene through the gas zones", "[gas][cli]") {
  const ScratchDir dir("gas-cli");
  write_text(dir / "box.obj", box_with_load_obj(3, 1.2, 1.2, 1.25, 0.35, 0.05, 0.5));
  write_text(dir / "scene.toml", kScene);
  const CliResult r = run_cli(
      "solve '" + (dir / "scene.toml").string() + "' -o '" + (dir / "out").string() + "' --quiet",
      dir);
  INFO(r.err);
  REQUIRE(r.status == 0);
  for (const char* f : {"report.json", "zones.csv", "gas_patches.csv", "zones.vtu", "patches.vtu",
                        "gas_zones.png", "gas_zones.svg"})
    CHECK(std::filesystem::exists(dir / "out" / f));
  const auto report = nlohmann::json::parse(slurp(dir / "out" / "report.json"));
  const auto& b = report["gas"]["balance"];
  const double firing = b["heat_released_W"].get<double>();
  CHECK(firing == 200e3);
  // Firing rate + air = load + other held + walls + surroundings + flue, to 1e-9.
  const double out = b["to_load_W"].get<double>() + b["to_other_held_surfaces_W"].get<double>() +
                     b["through_walls_W"].get<double>() + b["to_surroundings_W"].get<double>() +
                     b["flue_enthalpy_W"].get<double>();
  CHECK(std::fabs(firing + b["air_enthalpy_in_W"].get<double>() - out) < 1e-9 * firing);
  CHECK(report["gas"]["solver"]["converged"].get<bool>());
  CHECK(report["gas"]["zones"].size() == 3);
  CHECK(report["cautions"].dump().find("carbon monoxide") != std::string::npos);
  // Every file says whether the solve converged: CSV columns and VTU field data.
  for (const char* f : {"zones.csv", "gas_patches.csv"}) {
    const std::string csv = slurp(dir / "out" / f);
    CHECK(csv.substr(0, csv.find('\n')).find(",converged") != std::string::npos);
    CHECK(csv.find(",yes\n") != std::string::npos);
    CHECK(csv.find(",no\n") == std::string::npos);
  }
  for (const char* f : {"zones.vtu", "patches.vtu"})
    CHECK(slurp(dir / "out" / f)
              .find("Name=\"converged\" NumberOfTuples=\"1\" format=\"ascii\">1<") !=
          std::string::npos);
}

TEST_CASE("hearthray solve refuses bad gas input with error and exit 2", "[gas][cli]") {
  const ScratchDir dir("gas-cli-bad");
  write_text(dir / "box.obj", box_with_load_obj(3, 1.2, 1.2, 1.25, 0.35, 0.05, 0.5));
  std::string scene = kScene;
  scene.replace(scene.find("fuel = \"propane\""), 16, "fuel = \"wood\"");
  write_text(dir / "scene.toml", scene);
  const CliResult r = run_cli("solve '" + (dir / "scene.toml").string() + "'", dir);
  CHECK(r.status == 2);
  CHECK(r.err.find("error:") != std::string::npos);
  CHECK(r.err.find("wood") != std::string::npos);
}

TEST_CASE("films between the gas and the walls: fluid = \"gas\" only with [gas]", "[gas][cli]") {
  const ScratchDir dir("gas-cli-films");
  write_text(dir / "box.obj", box_with_load_obj(3, 1.2, 1.2, 1.25, 0.35, 0.05, 0.5));
  std::string scene = kScene;
  const std::string wall = "wall = { U = \"1.2 W/m2K\", outside = \"20 C\" }\n";
  scene.insert(scene.find(wall) + wall.size(),
               "convection = { h = \"12 W/m2K\", fluid = \"gas\" }\n");
  write_text(dir / "scene.toml", scene);
  const CliResult r = run_cli(
      "solve '" + (dir / "scene.toml").string() + "' -o '" + (dir / "out").string() + "' --quiet",
      dir);
  INFO(r.err);
  REQUIRE(r.status == 0);
  const auto report = nlohmann::json::parse(slurp(dir / "out" / "report.json"));
  const auto& b = report["gas"]["balance"];
  const double firing = b["heat_released_W"].get<double>();
  const double out = b["to_load_W"].get<double>() + b["to_other_held_surfaces_W"].get<double>() +
                     b["through_walls_W"].get<double>() + b["to_surroundings_W"].get<double>() +
                     b["flue_enthalpy_W"].get<double>();
  CHECK(std::fabs(firing + b["air_enthalpy_in_W"].get<double>() - out) < 1e-9 * firing);
  double given = 0, received = 0;
  for (const auto& z : report["gas"]["zones"]) given += z["convection_out_W"].get<double>();
  for (const auto& p : report["gas"]["patches"]) received += p["convection_in_W"].get<double>();
  CHECK(given > 0);
  CHECK(std::fabs(given - received) < 1e-9 * firing);

  // A fluid temperature with [gas], and fluid = "gas" without it, are refused at their line.
  std::string fixed = scene;
  fixed.replace(fixed.find("fluid = \"gas\""), 13, "fluid = \"20 C\"");
  write_text(dir / "fixed.toml", fixed);
  CliResult bad = run_cli("solve '" + (dir / "fixed.toml").string() + "'", dir);
  CHECK(bad.status == 2);
  CHECK(bad.err.find("write fluid = \"gas\"") != std::string::npos);
  std::string no_gas = scene.substr(0, scene.find("[gas]"));
  write_text(dir / "nogas.toml", no_gas);
  bad = run_cli("solve '" + (dir / "nogas.toml").string() + "'", dir);
  CHECK(bad.status == 2);
  CHECK(bad.err.find("no [gas] table") != std::string::npos);
}
