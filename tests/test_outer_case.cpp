// Outer case temperatures: air properties, the Churchill-Chu film coefficient against simple
// correlations for air, the case temperature's energy balance and the touch warnings.
#include <catch2/catch.hpp>
#include <cmath>

#include "hearthray/outer_case.hpp"
#include "hearthray/units.hpp"

using namespace hearthray;

TEST_CASE("air properties follow the handbook table", "[outer_case]") {
  // Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, Table A.4 (air at 1 atm),
  // values recalled: 300 K: k = 26.3e-3 W/mK, nu = 15.89e-6 m2/s, Pr = 0.707;
  // 350 K: k = 30.0e-3, nu = 20.92e-6, Pr = 0.700. Sutherland's laws are good to ~1 %; the
  // table's density (1.1614 kg/m3 at 300 K) is 1.3 % below the ideal gas at 101 325 Pa
  // (1.1766), which the viscosities nu = mu / rho inherit: 2 % for them.
  const AirProperties a = air_properties(300);
  CHECK(a.conductivity == Approx(26.3e-3).epsilon(0.01));
  CHECK(a.kinematic_viscosity == Approx(15.89e-6).epsilon(0.02));
  CHECK(a.prandtl == Approx(0.707).epsilon(0.01));
  const AirProperties b = air_properties(350);
  CHECK(b.conductivity == Approx(30.0e-3).epsilon(0.01));
  CHECK(b.kinematic_viscosity == Approx(20.92e-6).epsilon(0.02));
  CHECK(b.prandtl == Approx(0.700).epsilon(0.015));
}

TEST_CASE("natural convection agrees with the simplified correlations for air", "[outer_case]") {
  // Holman, Heat Transfer, Table 7-2 (simplified equations for air at atmospheric pressure,
  // vertical planes), recalled: laminar h = 1.42 (dT / L)^(1/4), turbulent h = 1.31 dT^(1/3).
  // They are fits of older correlations; 12 % covers their difference from Churchill-Chu.
  const double room = 293.15;
  const double laminar = natural_convection_h(room + 30, room, 0.3);  // Ra ~ 1e8
  CHECK(laminar == Approx(1.42 * std::pow(30 / 0.3, 0.25)).epsilon(0.12));
  const double turbulent = natural_convection_h(room + 60, room, 2.0);  // Ra ~ 1e10
  CHECK(turbulent == Approx(1.31 * std::pow(60.0, 1.0 / 3.0)).epsilon(0.12));
  CHECK(natural_convection_h(room, room, 1.0) == 0);
}

TEST_CASE("the case temperature gives off the wall loss and is flagged by ISO 13732-1",
          "[outer_case]") {
  const double room = 293.15, height = 1.2;
  for (double q : {20.0, 150.0, 600.0, 3000.0}) {
    const double T = outer_case_temperature(q, room, height);
    const double given = natural_convection_h(T, room, height) * (T - room) +
                         kCaseEmissivity * kStefanBoltzmann * (std::pow(T, 4) - std::pow(room, 4));
    CHECK(given == Approx(q).epsilon(1e-6));
    // Radiation alone would need a hotter case; with it the case is above the room.
    CHECK(T > room);
    CHECK(T < room + q / (4 * kCaseEmissivity * kStefanBoltzmann * std::pow(room, 3)));
  }
  CHECK(outer_case_temperature(0, room, height) == room);
  // About 10 W/m2K of film in all: 600 W/m2 is some 50 K over the room, hot to touch; 3000
  // W/m2 burns on a touch; 20 W/m2 is a warm wall.
  const double warm = outer_case_temperature(20, room, height) - kZeroCelsius;
  const double hot = outer_case_temperature(3000, room, height) - kZeroCelsius;
  CHECK(warm < kBurnOnContactC);
  CHECK(hot > kBurnOnTouchC);
  CHECK(hazard_text(TouchHazard::touch).find("ISO 13732-1") != std::string::npos);
  CHECK(hazard_text(TouchHazard::none).empty());
}
