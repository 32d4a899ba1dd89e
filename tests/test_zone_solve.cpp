// The zone solve: input checks, Newton's quadratic convergence (the Jacobian is exact), and
// conservation.
#include <catch2/catch.hpp>
#include <cmath>

#include "hearthray/error.hpp"
#include "hearthray/zone_solve.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

struct CubeCase {
  Scene scene = load_obj_text(unit_cube_obj(), "cube");
  PatchSet patches = make_surface_patches(scene);
  GasExchange x;
  GrayGasSet gas = GrayGasSet::wsgg({0.18, 0.09});
  Combustion combustion;

  CubeCase() {
    const Tracer tracer(scene);
    GasTraceOptions options;
    options.rays_per_patch = 5000;
    options.rays_per_cell = 5000;
    x = trace_gas_exchange(scene, patches, tracer, {2, 1, 1}, gas.absorption_coefficients(),
                           options);
    smooth_gas_exchange(x);
    CombustionInput ci;
    ci.firing_rate = 50e3;
    combustion = burn(ci);
  }

  // Floor a load at 500 K, walls gray and adiabatic (unknown temperature), two zones in plug
  // flow with all heat released in the first.
  ZoneSolveInput input() const {
    ZoneSolveInput in;
    in.exchange = &x;
    in.gases = &gas;
    for (std::size_t p = 0; p < 6; ++p) {
      if (scene.surfaces[p].name == "floor")
        in.patches.push_back({0.9, true, 500.0, 0.0});
      else
        in.patches.push_back({0.6, false, 1000.0, 0.0});
    }
    in.zones = {{false, 1500.0, combustion.firing_rate}, {false, 1500.0, 0.0}};
    in.flow_order = {0, 1};
    in.combustion = &combustion;
    return in;
  }
};

// Newton with the exact Jacobian: once close, each residual is below a constant times the
// square of the previous one. Residuals after n iterations, from runs stopped at n.
bool converges_quadratically(ZoneSolveInput in, int iterations, double scale) {
  std::vector<double> res;
  for (int n = 1; n <= iterations; ++n) {
    in.max_iterations = n;
    in.tolerance = 1e-300;
    res.push_back(solve_zones(in).max_residual);
  }
  if (res.size() < 3) return false;
  bool quadratic = false;
  for (std::size_t n = 0; n + 1 < res.size(); ++n) {
    UNSCOPED_INFO("residual " << n + 1 << ": " << res[n] << " W, next " << res[n + 1] << " W");
    if (res[n] < 1e-2 * scale && res[n] > 1e-7 * scale)
      quadratic = quadratic || res[n + 1] < 10 * res[n] * res[n] / scale;
  }
  return quadratic;
}

}  // namespace

TEST_CASE("zone solve converges quadratically and conserves energy", "[gas]") {
  const CubeCase c;
  ZoneSolveInput in = c.input();
  const ZoneSolveResult r = solve_zones(in);
  REQUIRE(r.converged);
  CHECK(std::fabs(r.balance_error) < 1e-9 * c.combustion.firing_rate);
  const double scale = c.combustion.firing_rate;
  CHECK(converges_quadratically(in, r.iterations, scale));
  // Adiabatic walls carry no net radiation; the load takes heat.
  for (std::size_t p = 0; p < 6; ++p)
    if (!in.patches[p].known_temperature) CHECK(std::fabs(r.patches[p].net_out) < 1e-9 * scale);
  CHECK(r.zones[1].temperature < r.zones[0].temperature);
}

TEST_CASE("zone solve with gas-to-wall convection stays exact and conservative", "[gas]") {
  const CubeCase c;
  ZoneSolveInput in = c.input();
  // Every surface has a film to one of the two zones; the walls also lose heat outwards.
  for (std::size_t p = 0; p < 6; ++p) {
    in.patches[p].convection_h = 15;
    in.patches[p].convection_zone = int(p % 2);
    if (!in.patches[p].known_temperature) {
      in.patches[p].wall_U = 2;
      in.patches[p].outside_temperature = 300;
    }
  }
  const ZoneSolveResult r = solve_zones(in);
  REQUIRE(r.converged);
  const double scale = c.combustion.firing_rate;
  CHECK(std::fabs(r.balance_error) < 1e-9 * scale);
  CHECK(converges_quadratically(in, r.iterations, scale));
  // What the zones give by convection the patches receive, film by film.
  double given = 0, received = 0;
  for (const ZoneGasResult& z : r.zones) given += z.convection_out;
  for (std::size_t p = 0; p < 6; ++p) {
    received += r.patches[p].convection_in;
    const double T_zone = r.zones[std::size_t(in.patches[p].convection_zone)].temperature;
    CHECK(r.patches[p].convection_in ==
          Approx(15 * c.x.areas[p] * (T_zone - r.patches[p].temperature)).epsilon(1e-12));
  }
  CHECK(given == Approx(received).epsilon(1e-12));
  CHECK(received > 0);
  // A wall of solved temperature: radiation out + loss = convection in.
  for (std::size_t p = 0; p < 6; ++p)
    if (!in.patches[p].known_temperature)
      CHECK(r.patches[p].net_out + r.patches[p].wall_loss ==
            Approx(r.patches[p].convection_in).margin(1e-9 * scale));
}

TEST_CASE("a film and a wall in series: the wall temperature of the two resistances", "[gas]") {
  // A nearly transparent gas held at 1500 K in a cube whose six walls each have a film
  // (h = 20 W/m2K) inside and a conductance U = 5 W/m2K to 300 K outside. By symmetry the
  // walls share one temperature and exchange no net radiation, so each balances
  // h (T_g - T_w) = U (T_w - T_o): T_w = (h T_g + U T_o) / (h + U) (steady conduction through
  // resistances in series; e.g. Incropera & DeWitt, Fundamentals of Heat and Mass Transfer,
  // ch. 3, the plane wall with convection on both sides).
  const Scene scene = load_obj_text(unit_cube_obj(), "cube");
  const PatchSet patches = make_surface_patches(scene);
  const GrayGasSet gas = GrayGasSet::gray(1e-9);
  const Tracer tracer(scene);
  GasTraceOptions options;
  options.rays_per_patch = 2000;
  options.rays_per_cell = 2000;
  GasExchange x =
      trace_gas_exchange(scene, patches, tracer, {1, 1, 1}, gas.absorption_coefficients(), options);
  smooth_gas_exchange(x);
  ZoneSolveInput in;
  in.exchange = &x;
  in.gases = &gas;
  const double h = 20, U = 5, Tg = 1500, To = 300;
  for (std::size_t p = 0; p < 6; ++p) {
    ZonePatchCondition w;
    w.emissivity = 0.7;
    w.known_temperature = false;
    w.temperature = 800;
    w.wall_U = U;
    w.outside_temperature = To;
    w.convection_h = h;
    w.convection_zone = 0;
    in.patches.push_back(w);
  }
  in.zones = {{true, Tg, 0.0}};
  const ZoneSolveResult r = solve_zones(in);
  REQUIRE(r.converged);
  const double Tw = (h * Tg + U * To) / (h + U);
  for (std::size_t p = 0; p < 6; ++p) CHECK(r.patches[p].temperature == Approx(Tw).epsilon(1e-6));
  // The zone, held at its temperature, needs what the films take.
  CHECK(r.zones[0].convection_out == Approx(6 * h * (Tg - Tw)).epsilon(1e-6));
}

TEST_CASE("zone solve input is checked", "[gas]") {
  const CubeCase c;
  ZoneSolveInput in = c.input();
  in.patches[0].emissivity = 0;
  CHECK_THROWS_WITH(solve_zones(in), Catch::Contains("emissivity"));
  in = c.input();
  in.zones.pop_back();
  CHECK_THROWS_WITH(solve_zones(in), Catch::Contains("one condition per zone"));
  in = c.input();
  in.flow_order = {0, 0};
  CHECK_THROWS_WITH(solve_zones(in), Catch::Contains("twice"));
  in = c.input();
  in.combustion = nullptr;
  CHECK_THROWS_WITH(solve_zones(in), Catch::Contains("combustion"));
  const GrayGasSet other = GrayGasSet::gray(1.0);
  in = c.input();
  in.gases = &other;
  CHECK_THROWS_AS(solve_zones(in), InputError);
  in = c.input();
  in.zones[0].heat_release = -1;
  CHECK_THROWS_WITH(solve_zones(in), Catch::Contains("heat release"));
  in = c.input();
  in.patches[0].convection_h = 10;
  in.patches[0].convection_zone = 2;
  CHECK_THROWS_WITH(solve_zones(in), Catch::Contains("zone that does not exist"));
}
