// The [gas] table, and a scene through the gas stages to its report.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cstdlib>
#include <fstream>
#include <iterator>
#include <sstream>

#include "hearthray/error.hpp"
#include "hearthray/gas_input.hpp"
#include "hearthray/gas_report.hpp"
#include "hearthray/gas_run.hpp"
#include "support/cli_run.hpp"
#include "support/gas_fixtures.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

std::string error_of(const std::string& text) {
  try {
    parse_gas_table(text, "scene.toml");
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

}  // namespace

TEST_CASE("the [gas] table: gray, partial pressures, firing", "[gas]") {
  const GasInput gray = parse_gas_table(R"([gas]
cells = [4, 1, 1]
absorption_coefficient = "0.3 1/m"
temperature = "1200 C"
)",
                                        "s");
  CHECK(gray.cells == std::array<int, 3>{4, 1, 1});
  CHECK(*gray.absorption_coefficient == 0.3);
  CHECK(*gray.temperature == Approx(1473.15));
  CHECK(gas_properties(gray, nullptr).size() == 1);

  const GasInput wsgg = parse_gas_table(R"([gas]
partial_pressures = { h2o = "18.2385 kPa", co2 = "0.09 atm" }
soot = { volume_fraction = 1e-7, temperature = "1400 C" }
temperature = "1100 K"
)",
                                        "s");
  CHECK(wsgg.composition->p_h2o == Approx(0.18));
  const GrayGasSet set = gas_properties(wsgg, nullptr);
  CHECK(set.set() == WsggSet::mixture_ratio_2);
  CHECK(set.soot_absorption_coefficient() > 0);

  const GasInput fired = parse_gas_table(R"([gas]
cells = [1, 1, 3]
flow = "-z"
release = [0.6, 0.4]
[gas.firing]
fuel = "fuel oil"
carbon_hydrogen_ratio = 6.8
rate = "1.5 MW"
flue_o2 = "3 %"
air_temperature = "200 C"
)",
                                         "s");
  CHECK(fired.flow == GasInput::Flow::plug);
  CHECK(fired.flow_axis == 2);
  CHECK(fired.flow_direction == -1);
  CHECK(fired.firing->firing_rate == 1.5e6);
  CHECK(fired.firing->flue_o2_dry == Approx(0.03));
  CHECK(fired.firing->air_temperature == Approx(473.15));
  CHECK(fired.release == std::vector<double>{0.6, 0.4});
}

TEST_CASE("the [gas] table refuses what it cannot use", "[gas]") {
  CHECK_THAT(error_of("[gas]\nabsorption = \"1 1/m\"\n"),
             Catch::Contains("unknown key 'absorption'"));
  CHECK_THAT(error_of("[gas]\nabsorption_coefficient = \"1\"\ntemperature = \"1000 C\"\n"),
             Catch::Contains("with a unit"));
  CHECK_THAT(error_of("[gas]\nabsorption_coefficient = \"1 1/m\"\n"),
             Catch::Contains("either temperature"));
  CHECK_THAT(error_of("[gas]\ntemperature = \"1000 C\"\n"),
             Catch::Contains("radiating properties"));
  CHECK_THAT(error_of("[gas]\npartial_pressures = { h2o = \"0.5 atm\", co2 = \"0.05 atm\" }\n"
                      "temperature = \"1000 C\"\n"),
             Catch::Contains("outside the range"));
  CHECK_THAT(error_of("[gas]\nabsorption_coefficient = \"1 1/m\"\nflow = \"+x\"\n"),
             Catch::Contains("needs a [gas.firing]"));
  CHECK_THAT(error_of("[gas]\ncells = [2, 2, 1]\nflow = \"+x\"\n[gas.firing]\nfuel = \"propane\"\n"
                      "rate = \"100 kW\"\n"),
             Catch::Contains("along that axis only"));
  CHECK_THAT(error_of("[gas]\nflow = \"+x\"\nrelease = [0.5, 0.4]\n[gas.firing]\n"
                      "fuel = \"propane\"\nrate = \"100 kW\"\n"),
             Catch::Contains("add up to 1"));
  CHECK_THAT(error_of("[gas]\nflow = \"+x\"\n[gas.firing]\nfuel = \"coal\"\nrate = \"100 kW\"\n"),
             Catch::Contains("fuel in [gas.firing] is 'coal'"));
  CHECK_THAT(error_of("[gas]\nflow = \"+x\"\n[gas.firing]\nfuel = \"propane\"\nrate = \"100 kW\"\n"
                      "excess_air = \"10 %\"\nflue_o2 = \"3 %\"\n"),
             Catch::Contains("give one"));
  CHECK_THAT(error_of("[gas]\nflow = \"+x\"\n[gas.firing]\nfuel = \"propane\"\n"),
             Catch::Contains("needs rate"));
  CHECK_THAT(error_of("[gas]\nflow = \"stirred\"\ncells = [2, 1, 1]\n[gas.firing]\n"
                      "fuel = \"propane\"\nrate = \"100 kW\"\n"),
             Catch::Contains("cells must be [1, 1, 1]"));
  // Errors name the file and the line.
  CHECK_THAT(error_of("\n\n[gas]\ncells = [0, 1, 1]\n"), Catch::StartsWith("scene.toml:4:"));
}

TEST_CASE("a fired box through the gas stages to its report", "[gas]") {
  // Invented: a 3 x 1.2 x 1.2 m box fired with natural gas, a load held at 500 C, refractory
  // walls losing heat through U = 1.5 W/m2K to 20 C outside.
  const Scene scene = load_obj_text(box_with_load_obj(3, 1.2, 1.2, 1.25, 0.35, 0.05, 0.5), "box");
  const PatchSet patches = make_surface_patches(scene);
  const Tracer tracer(scene);
  const GasInput input = parse_gas_table(R"([gas]
cells = [3, 1, 1]
rays_per_cell = 20000
flow = "+x"
load = ["load"]
[gas.firing]
fuel = "natural gas"
rate = "250 kW"
excess_air = "15 %"
)",
                                         "s");
  std::vector<SurfaceThermal> thermal(scene.surfaces.size());
  for (std::size_t s = 0; s < scene.surfaces.size(); ++s) {
    thermal[s].emissivity = 0.8;
    if (scene.surfaces[s].name == "load") {
      thermal[s].condition.kind = ConditionKind::temperature;
      thermal[s].condition.value = 773.15;
    } else {
      thermal[s].condition.kind = ConditionKind::adiabatic;
      thermal[s].condition.wall_loss = WallLoss{1.5, 293.15};
    }
  }
  GasRunOptions options;
  options.rays_for_patch.assign(patches.size(), 20000);
  const GasRun run = run_gas(input, scene, patches, tracer,
                             gas_patch_conditions(thermal, scene, patches), options);
  REQUIRE(run.solve.converged);
  CHECK(run.flow_order == std::vector<std::size_t>{0, 1, 2});
  // Firing rate + air = load + walls + flue (+ surroundings, none here), to 1e-9.
  const double firing = 250e3;
  CHECK(run.solve.heat_released == firing);
  CHECK(run.heat_to_held_patches() == 0.0);  // the load is the only held surface
  CHECK(run.heat_to_load() > 0.0);
  CHECK(std::fabs(run.heat_to_load() + run.heat_through_walls() + run.solve.to_surroundings +
                  run.solve.flue_enthalpy - firing - run.solve.air_enthalpy_in) < 1e-9 * firing);
  std::vector<std::string> names;
  for (const Patch& p : patches.patches) names.push_back(p.name);
  std::ostringstream table, zones, pcsv;
  print_gas_surfaces(table, run, scene, patches);
  print_gas_table(table, run);
  write_zones_csv(zones, run);
  write_gas_patches_csv(pcsv, run, names);
  const std::string json = gas_report_json(run, names);
  CHECK_THAT(table.str(), Catch::Contains("efficiency"));
  CHECK_THAT(table.str(), Catch::Contains("carbon monoxide"));
  const std::string zone_rows = zones.str(), patch_rows = pcsv.str();
  CHECK(std::count(zone_rows.begin(), zone_rows.end(), '\n') == 1 + 3);
  CHECK(std::count(patch_rows.begin(), patch_rows.end(), '\n') == 1 + 7);
  CHECK_THAT(json, Catch::Contains("\"efficiency\""));
  CHECK_THAT(table.str(), Catch::Contains("load"));
  std::ostringstream report;
  write_gas_report(report, {"0", "scene.toml", "box.obj", 1, {"zones.csv"}}, run, names);
  CHECK_THAT(report.str(), Catch::Contains("carbon monoxide"));
  CHECK_THAT(report.str(), Catch::Contains("\"to_load_W\""));
  // zones.vtu holds one hexahedron per zone; the cut picture has the zones' colours.
  const ScratchDir dir("gas-report");
  write_zones_vtu((dir / "zones.vtu").string(), run);
  std::ifstream vtu(dir / "zones.vtu");
  const std::string text((std::istreambuf_iterator<char>(vtu)), std::istreambuf_iterator<char>());
  CHECK_THAT(text, Catch::Contains("NumberOfCells=\"3\""));
  CHECK_THAT(text, Catch::Contains("Name=\"temperature [K]\""));
  const Picture picture = zone_cut_picture(run, scene);
  CHECK(picture.width() > 700);
  if (const char* keep = std::getenv("HEARTHRAY_KEEP_PICTURES"))
    write_picture(std::string(keep) + "/gas-zone-cut.png", picture);
  // A load the mesh does not have is refused before anything is traced.
  GasInput wrong = input;
  wrong.load = {"ingot"};
  CHECK_THROWS_WITH(run_gas(wrong, scene, patches, tracer,
                            gas_patch_conditions(thermal, scene, patches), options),
                    Catch::Contains("'ingot'"));
  // With a gas, a film's fluid is the gas beside the surface; a fluid temperature is refused,
  // naming the surface.
  std::vector<SurfaceThermal> fixed_fluid = thermal;
  fixed_fluid[0].condition.convection = Convection{10, 300};
  CHECK_THROWS_WITH(gas_patch_conditions(fixed_fluid, scene, patches),
                    Catch::Contains(scene.surfaces[0].name));

  // Films on every surface to the gas: each patch's film goes to the zone beside it (the
  // grid has three cells along x), and the balance still closes.
  for (SurfaceThermal& t : thermal) t.condition.convection = Convection{10, 0, true};
  const GasRun filmed = run_gas(input, scene, patches, tracer,
                                gas_patch_conditions(thermal, scene, patches), options);
  REQUIRE(filmed.solve.converged);
  CHECK(std::fabs(filmed.solve.balance_error) < 1e-9 * firing);
  CHECK(std::fabs(filmed.heat_to_load() + filmed.heat_through_walls() +
                  filmed.solve.to_surroundings + filmed.solve.flue_enthalpy - firing -
                  filmed.solve.air_enthalpy_in) < 1e-9 * firing);
  int ends_seen = 0;
  for (std::size_t p = 0; p < patches.size(); ++p) {
    const int zone = filmed.patches[p].convection_zone;
    REQUIRE(zone >= 0);
    const int along_x = filmed.exchange.grid.cell_index(filmed.exchange.zone_cell[zone])[0];
    const std::string& name = scene.surfaces[patches.patches[p].surface].name;
    if (name == "west" || name == "east") {
      CHECK(along_x == (name == "west" ? 0 : 2));
      ++ends_seen;
    }
  }
  CHECK(ends_seen == 2);
  // The gas, far hotter than the load at 500 C, heats it by convection too.
  double to_load = 0;
  for (std::size_t p = 0; p < patches.size(); ++p)
    if (filmed.load_patch[p]) to_load += filmed.solve.patches[p].convection_in;
  CHECK(to_load > 0);
}
