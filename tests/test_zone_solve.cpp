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

}  // namespace

TEST_CASE("zone solve converges quadratically and conserves energy", "[gas]") {
  const CubeCase c;
  ZoneSolveInput in = c.input();
  const ZoneSolveResult r = solve_zones(in);
  REQUIRE(r.converged);
  CHECK(std::fabs(r.balance_error) < 1e-9 * c.combustion.firing_rate);
  // Newton with the exact Jacobian: once close, each residual is below a constant times the
  // square of the previous one. Residuals after n iterations, from runs stopped at n.
  std::vector<double> res;
  for (int n = 1; n <= r.iterations; ++n) {
    in.max_iterations = n;
    in.tolerance = 1e-300;
    res.push_back(solve_zones(in).max_residual);
  }
  REQUIRE(res.size() >= 3);
  const double scale = c.combustion.firing_rate;
  bool quadratic = false;
  for (std::size_t n = 0; n + 1 < res.size(); ++n) {
    UNSCOPED_INFO("residual " << n + 1 << ": " << res[n] << " W, next " << res[n + 1] << " W");
    if (res[n] < 1e-2 * scale && res[n] > 1e-7 * scale)
      quadratic = quadratic || res[n + 1] < 10 * res[n] * res[n] / scale;
  }
  CHECK(quadratic);
  // Adiabatic walls carry no net radiation; the load takes heat.
  for (std::size_t p = 0; p < 6; ++p)
    if (!in.patches[p].known_temperature) CHECK(std::fabs(r.patches[p].net_out) < 1e-9 * scale);
  CHECK(r.zones[1].temperature < r.zones[0].temperature);
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
}
