// Trade units: BTU, kilocalorie, foot and degree Fahrenheit in scene files, and a scene written
// in them solving exactly as its SI twin. The definitions checked against: the International
// Table calorie, 1 cal_IT = 4.1868 J, and BTU, 1 BTU_IT = 1055.05585262 J (Fifth International
// Conference on the Properties of Steam, London 1956, as restated in NIST SP 811, Appendix B.8,
// recalled); 1 ft = 0.3048 m (international yard and pound agreement, 1959); T_F = 9/5 T_C + 32.
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdio>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "hearthray/error.hpp"
#include "hearthray/scene_file.hpp"
#include "hearthray/units.hpp"
#include "support/cli_run.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;
using json = nlohmann::json;

namespace {
constexpr double kBtu = 1055.05585262;  // J, see above
constexpr double kKcal = 4186.8;        // J
constexpr double kFt = 0.3048;          // m

// All digits of a double, so the SI twin gets the same number.
std::string shortest(double v) {
  char text[40];
  std::snprintf(text, sizeof text, "%.17g", v);
  return text;
}
}  // namespace

TEST_CASE("trade units in scene files convert by the International Table definitions", "[units]") {
  CHECK(parse_power("3600 Btu/h", "p") == Approx(kBtu).epsilon(1e-12));
  CHECK(parse_power("3600 BTU/hr", "p") == Approx(kBtu).epsilon(1e-12));
  CHECK(parse_power("3.6 MBH", "p") == Approx(kBtu).epsilon(1e-12));
  CHECK(parse_power("3600 kcal/h", "p") == Approx(kKcal).epsilon(1e-12));
  CHECK(parse_heat_flux("1 Btu/(h·ft²)", "q") == Approx(kBtu / 3600 / (kFt * kFt)).epsilon(1e-12));
  CHECK(parse_heat_flux("1 kcal/(h m2)", "q") == Approx(kKcal / 3600).epsilon(1e-12));
  CHECK(parse_heat_transfer_coefficient("1 Btu/(h·ft²·°F)", "h") ==
        Approx(kBtu / 3600 / (kFt * kFt) * 1.8).epsilon(1e-12));
  CHECK(parse_heat_transfer_coefficient("1 kcal/(h·m²·°C)", "h") ==
        Approx(kKcal / 3600).epsilon(1e-12));
  CHECK(parse_conductivity("1 Btu/(h ft F)", "k") ==
        Approx(kBtu / 3600 / kFt * 1.8).epsilon(1e-12));
  CHECK(parse_conductivity("1 Btu in/(h ft2 F)", "k") ==
        Approx(kBtu / 3600 * 0.0254 / (kFt * kFt) * 1.8).epsilon(1e-12));
  CHECK(parse_temperature("212 °F", "t") == Approx(373.15).epsilon(1e-15));
  CHECK(parse_temperature("-40 degF", "t") == Approx(parse_temperature("-40 C", "t")));
  CHECK_THROWS_AS(parse_power("5 Btu", "p"), InputError);  // energy, not power
}

TEST_CASE("trade units agree with the trade's round figures", "[units]") {
  // Common practice, no source: 1 BTU is about 1055 J and 1 kcal about 4186 J, figures rounded
  // (the BTU to the nearest joule) or cut (the kcal) to whole joules.
  CHECK(std::abs(parse_power("1 Btu/h", "p") * 3600 - 1055) <= 0.5);
  CHECK(std::abs(parse_power("1 kcal/h", "p") * 3600 - 4186) < 1.0);
  // A 100 000 Btu/h burner is about 29.3 kW (common practice, no source), to the 0.1 kW given.
  CHECK(std::abs(parse_power("100000 Btu/h", "p") - 29300) <= 50);
}

TEST_CASE("a scene in Btu/h and degrees Fahrenheit solves as its SI twin", "[units][solve]") {
  const ScratchDir dir("trade-twin");
  write_text(dir / "cube.obj", unit_cube_obj());
  const std::string head =
      "[mesh]\nfile = \"cube.obj\"\nunit = \"m\"\n[rays]\nper_patch = 5000\n"
      "[defaults]\nemissivity = 0.8\nadiabatic = true\n";
  // The same conditions, once in trade units and once converted by hand to SI.
  const double q_W = 20000 * kBtu / 3600, roof_K = (1500 - 32) * 5.0 / 9.0 + 273.15;
  const double h_SI = 2 * kBtu / 3600 / (kFt * kFt) * 1.8, fluid_K = (70 - 32) * 5.0 / 9.0 + 273.15;
  const double U_SI = 1.2 * kKcal / 3600;
  write_text(dir / "us.toml", head +
                                  "[surface.floor]\npower = \"20000 Btu/h\"\n"
                                  "[surface.roof]\ntemperature = \"1500 °F\"\n"
                                  "[surface.east]\nconvection = { h = \"2 Btu/(h ft2 F)\", "
                                  "fluid = \"70 F\" }\n"
                                  "wall = { U = \"1.2 kcal/(h m2 C)\", outside = \"70 F\" }\n");
  write_text(dir / "si.toml", head + "[surface.floor]\npower = \"" + shortest(q_W) +
                                  " W\"\n[surface.roof]\n" + "temperature = \"" + shortest(roof_K) +
                                  " K\"\n[surface.east]\nconvection = { h "
                                  "= \"" +
                                  shortest(h_SI) + " W/m2K\", fluid = \"" + shortest(fluid_K) +
                                  " K\" }\n" + "wall = { U = \"" + shortest(U_SI) +
                                  " W/m2K\", outside = \"" + shortest(fluid_K) + " K\" }\n");
  json reports[2];
  int k = 0;
  for (const char* name : {"us", "si"}) {
    const CliResult r = run_cli("solve " + (dir / (std::string(name) + ".toml")).string() +
                                    " --units " + name + " -o " + (dir / name).string(),
                                dir);
    INFO(r.err);
    REQUIRE(r.status == 0);
    reports[k++] = json::parse(slurp(dir / name / "report.json"));
    if (std::string(name) == "us") {
      // The table and surfaces.csv in US units, the unit in every header.
      CHECK(r.out.find("Btu/h") != std::string::npos);
      CHECK(r.out.find("Btu/h/ft2") != std::string::npos);
      CHECK(r.out.find(" W\n") == std::string::npos);
      const std::string csv = slurp(dir / name / "surfaces.csv");
      CHECK(csv.rfind("surface,face,side,area_ft2,emissivity,temperature_K,temperature_F,"
                      "radiosity_Btu_h_ft2,irradiation_Btu_h_ft2,net_flux_Btu_h_ft2,net_Btu_h,"
                      "convection_Btu_h,wall_loss_Btu_h,heat_input_Btu_h,converged\n",
                      0) == 0);
      // The floor's row: its heat input is the 20 000 Btu/h it was given, its area 1 m2 in ft2.
      const std::size_t row = csv.find("\nfloor,");
      REQUIRE(row != std::string::npos);
      std::vector<std::string> cells;
      std::stringstream line(csv.substr(row + 1, csv.find('\n', row + 1) - row - 1));
      for (std::string cell; std::getline(line, cell, ',');) cells.push_back(cell);
      REQUIRE(cells.size() == 15);
      CHECK(std::stod(cells[3]) == Approx(1 / (kFt * kFt)).epsilon(1e-12));
      CHECK(std::stod(cells[13]) == Approx(20000).epsilon(1e-9));
    }
  }
  const json& us = reports[0].at("surfaces");
  const json& si = reports[1].at("surfaces");
  REQUIRE(us.size() == si.size());
  for (std::size_t s = 0; s < us.size(); ++s) {
    INFO(us[s].at("name"));
    for (const char* key : {"temperature_K", "heat_input_W", "convection_W", "wall_loss_W"})
      CHECK(us[s].at(key).get<double>() ==
            Approx(si[s].at(key).get<double>()).epsilon(1e-9).margin(1e-9));
  }
  CHECK(us[0].at("heat_input_W").get<double>() == Approx(q_W).epsilon(1e-9));
}

TEST_CASE("results shown in US and kcal units go back to SI unchanged", "[units]") {
  for (UnitSystem system : {UnitSystem::si, UnitSystem::us, UnitSystem::kcal}) {
    for (ResultKind kind : {ResultKind::temperature, ResultKind::power, ResultKind::heat_flux,
                            ResultKind::area, ResultKind::heat_transfer_coefficient}) {
      const ResultUnit u = result_unit(system, kind);
      for (double si : {0.0, 1.0, 293.15, 1523.15, 12345.678})
        CHECK(u.to_si(u.from_si(si)) == Approx(si).epsilon(1e-14).margin(1e-12));
    }
  }
  // Against the definitions: 1 W is 3600/1055.05585262 Btu/h and 3600/4186.8 kcal/h; 100 C is
  // 212 F; 1 W/(m2 K) is 1/5.678263 Btu/(h ft2 F).
  CHECK(result_unit(UnitSystem::us, ResultKind::power).from_si(1) == Approx(3600 / kBtu));
  CHECK(result_unit(UnitSystem::kcal, ResultKind::power).from_si(1) == Approx(3600 / kKcal));
  CHECK(result_unit(UnitSystem::us, ResultKind::temperature).from_si(373.15) == Approx(212));
  CHECK(result_unit(UnitSystem::us, ResultKind::heat_transfer_coefficient).from_si(1) ==
        Approx(1 / (kBtu / 3600 / (kFt * kFt) * 1.8)));
  // Trade figures, common practice, no source: 1 kW is about 3412 Btu/h and 860 kcal/h.
  CHECK(std::abs(result_unit(UnitSystem::us, ResultKind::power).from_si(1000) - 3412) < 0.5);
  CHECK(std::abs(result_unit(UnitSystem::kcal, ResultKind::power).from_si(1000) - 860) < 0.5);
  CHECK(parse_unit_system("us") == UnitSystem::us);
  CHECK_THROWS_AS(parse_unit_system("imperial"), InputError);
}
