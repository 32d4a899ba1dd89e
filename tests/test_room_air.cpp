// The room air solved from its heat balance ([room_air], include/hearthray/room_air.hpp):
// against a one-zone room worked by hand, the first law on a room heated from one side, and
// the scene-file checks.
#include <catch2/catch.hpp>
#include <cmath>

#include "hearthray/pipeline.hpp"
#include "hearthray/units.hpp"
#include "support/meshes.hpp"
#include "support/scene_fixtures.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

SolvedScene solve_text(const ScratchDir& dir, const std::string& obj, const std::string& body) {
  LoadedScene l = load_scene_text(dir, obj, body);
  PipelineOptions options;
  options.rays_per_patch = 4000;
  options.threads = 1;
  SolvedScene s = model_scene(l.file, l.scene, options);
  solve_model_exchange(&s, options);
  return s;
}

}  // namespace

TEST_CASE("room air of a symmetric one-zone room against a hand calculation", "[room_air]") {
  // A closed 3 m cube, every face alike: heat flux q = 10 W/m2 put in, film h = 2.5 W/m2K to
  // the room air, wall U = 0.5 W/m2K to -5 C outside; 100 W of gains into the air; 0.5 air
  // changes per hour of the 27 m3 with rho c_p = 1.2 x 1005 J/(m3 K).
  // By symmetry every face is at one temperature T_s, so the net radiation of each face is
  // zero (its irradiation is sigma T_s^4 times its row sum, 1) whatever the view factors.
  // Hand calculation (temperatures in C, d = T_s - T_a, G = 1.2 * 1005 * 27 * 0.5 / 3600
  // = 4.5225 W/K, six faces of A = 9 m2):
  //   face:  q = h d + U (T_s + 5)          ->  T_s + 5 = (10 - 2.5 d) / 0.5 = 20 - 5 d
  //   air:   6 A h d + 100 = G (T_a + 5)    ->  T_a + 5 = 20 - 6 d
  //   so 135 d + 100 = 4.5225 (20 - 6 d) = 90.45 - 27.135 d,  d = -9.55 / 162.135
  //   = -0.058901 K,  T_a = 15 + 6 * 0.058901 = 15.3534 C,  T_s = T_a + d = 15.2945 C.
  ScratchDir dir("room_air_cube");
  const SolvedScene s = solve_text(dir, box_obj(3, 3, 3), R"(
[defaults]
emissivity = 0.9
heat_flux = "10 W/m2"
convection = { h = "2.5 W/m2K", fluid = "room_air" }
wall = { U = "0.5 W/m2K", outside = "-5 C" }
[room_air]
ventilation = "0.5 1/h"
outside = "-5 C"
gains = "100 W"
)");
  REQUIRE(s.result.status == ExchangeStatus::converged);
  REQUIRE(s.room_air);
  REQUIRE(s.room_air->converged);
  const double d = -9.55 / 162.135;
  const double air_C = 15 - 6 * d, surface_C = air_C + d;
  CHECK(air_C == Approx(15.3534).margin(1e-4));  // the hand calculation's rounding
  CHECK(s.room_air->volume_m3 == Approx(27).epsilon(1e-12));
  CHECK(s.room_air->conductance_W_K == Approx(4.5225).epsilon(1e-12));
  CHECK(s.room_air->air_K - kZeroCelsius == Approx(air_C).margin(1e-7));
  for (const NodeResult& n : s.result.nodes)
    CHECK(n.temperature_K - kZeroCelsius == Approx(surface_C).margin(1e-7));
  CHECK(s.room_air->ventilation_W == Approx(4.5225 * (air_C + 5)).epsilon(1e-9));
}

TEST_CASE("room air of a room heated from the floor keeps the first law", "[room_air]") {
  // Our own case: a 4 x 3 x 2.5 m room, a 600 W floor heater, the other faces with films to
  // the air and walls to 0 C; 40 m3/h of outside air at 0 C, 50 W of gains. Whatever the view
  // factors, heat in = heat out: 600 + 50 = wall losses + rho c_p V' (T_a - 0 C), and the air's
  // own balance (convection in + gains = ventilation) closes.
  ScratchDir dir("room_air_floor");
  const SolvedScene s = solve_text(dir, box_obj(4, 3, 2.5), R"(
[defaults]
emissivity = 0.9
adiabatic = true
convection = { h = "3 W/m2K", fluid = "room_air" }
wall = { U = "0.8 W/m2K", outside = "0 C" }
[surface.floor]
power = "600 W"
wall = false
convection = { h = "4 W/m2K", fluid = "room_air" }
[room_air]
ventilation = "40 m3/h"
outside = "0 C"
gains = "50 W"
)");
  REQUIRE(s.result.status == ExchangeStatus::converged);
  REQUIRE(s.room_air->converged);
  double walls = 0, convection = 0;
  for (const NodeResult& n : s.result.nodes) walls += n.wall_loss_W, convection += n.convection_W;
  const double G = 1.2 * 1005 * 40 / 3600.0;
  const double vent = G * (s.room_air->air_K - kZeroCelsius);
  CHECK(s.room_air->ventilation_W == Approx(vent).epsilon(1e-12));
  CHECK(convection + 50 == Approx(vent).epsilon(1e-8));
  CHECK(600 + 50 == Approx(walls + vent).epsilon(1e-8));
  // The heater warms the room above the outside, and the floor is the warmest face.
  CHECK(s.room_air->air_K > kZeroCelsius + 5);
  CHECK(s.room_air->volume_m3 == 0);  // a flow was given: no volume needed
}

TEST_CASE("room air input is checked", "[room_air]") {
  ScratchDir dir("room_air_input");
  const std::string obj = box_obj(3, 3, 3);
  auto refused = [&](const std::string& body, const std::string& words) {
    try {
      load_scene_text(dir, obj, body);
      FAIL("accepted: " << body);
    } catch (const InputError& e) {
      CHECK_THAT(e.what(), Catch::Contains(words));
    }
  };
  const std::string film = R"(
[defaults]
emissivity = 0.9
adiabatic = true
convection = { h = "2.5 W/m2K", fluid = "room_air" }
)";
  refused(film, "no [room_air] table");
  refused(film + "[room_air]\noutside = \"0 C\"\n", "needs ventilation and outside");
  refused(film + "[room_air]\nventilation = \"0.5 ach\"\noutside = \"0 C\"\n", "1/h, m3/h");
  refused(film + "[room_air]\nventilation = \"0.5 1/h\"\noutside = \"0 C\"\nvolume = \"-3 m3\"\n",
          "volume in [room_air] must be positive");
  refused(film + "[room_air]\nventilation = \"0.5 1/h\"\noutside = \"0 C\"\nspeed = 1\n",
          "unknown key 'speed'");
  refused(film +
              "[room_air]\nventilation = \"0.5 1/h\"\noutside = \"0 C\"\n[comfort]\n"
              "air_temperature = \"20 C\"\n[comfort.point.a]\nposition = [\"1 m\", \"1 m\", "
              "\"1 m\"]\n",
          "remove air_temperature");
}
