// Firing curves against closed forms: conduction into a slab after a step at its face, a
// lumped body cooling by radiation, and the steady state at the end of a long hold against the
// steady solve of the same scene.
#include <catch2/catch.hpp>
#include <cmath>
#include <regex>

#include "hearthray/firing.hpp"
#include "hearthray/pipeline.hpp"
#include "hearthray/units.hpp"
#include "support/cli_run.hpp"
#include "support/meshes.hpp"
#include "support/scene_fixtures.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

SolvedScene modelled(const ScratchDir& dir, const std::string& obj, const std::string& body) {
  const LoadedScene l = load_scene_text(dir, obj, body);
  PipelineOptions options;
  return model_scene(l.file, l.scene, options);
}

// The box of box_obj with every face turned outwards (a convex body in open space).
std::string outward_box(double a) {
  const std::string inward = box_obj(a, a, a);
  return std::regex_replace(inward, std::regex(R"(f (\d+) (\d+) (\d+))"), "f $1 $3 $2");
}

}  // namespace

TEST_CASE("a slab after a step at its face follows the series solution", "[validation][firing]") {
  // Plane wall 0 <= x <= L, initially at T0, its face x = 0 held at T1 from t = 0, the face
  // x = L insulated: (T - T1)/(T0 - T1) = sum_n 4/((2n+1) pi) sin((2n+1) pi x / (2L))
  // exp(-(2n+1)^2 pi^2 alpha t / (4 L^2)) (Carslaw & Jaeger, Conduction of Heat in Solids,
  // 2nd ed., 1959, sec. 3.3; Incropera & DeWitt, Fundamentals of Heat and Mass Transfer,
  // sec. 5.5, the plane wall of half thickness L with convection in the limit Bi -> infinity).
  const ScratchDir dir("firing-slab");
  const SolvedScene s = modelled(dir, box_obj(1, 1, 1), R"(
[defaults]
emissivity = 0.8
adiabatic = true
[surface.floor]
temperature = "500 C"
[surface.roof]
power = "1 W"
)");
  const double L = 0.1, k = 1.0, rho = 2000, c = 1000, alpha = k / (rho * c);
  const double T0 = 293.15, T1 = 773.15;
  FiringInput in;
  in.control = "roof";
  in.start_K = T0;
  in.power_W = 1e-6;  // nothing else matters: the slab's face is held
  in.schedule = {{ScheduleSegment::Kind::hold, 0, 0, 3 * 3600}};
  in.cells_per_layer = 60;
  in.tolerance_K = 0.02;
  SurfaceMass slab;
  slab.kind = SurfaceMass::Kind::slab;
  slab.layers = {WallLayer{L, k, rho, c, {}}};
  in.surfaces = {{"floor", slab}};
  const FiringResult r = run_firing(s.model, in);
  REQUIRE(r.completed);
  // The deepest cell's centre, x = L - dx/2.
  const double x = L - L / in.cells_per_layer / 2;
  int checked = 0;
  for (const FiringSample& sample : r.samples) {
    const double Fo = alpha * sample.time_s / (L * L);
    if (Fo < 0.05) continue;
    double theta = 0;
    for (int n = 0; n < 200; ++n) {
      const double m = (2 * n + 1) * kPi / 2;
      theta += 2 / m * std::sin(m * x / L) * std::exp(-m * m * Fo);
    }
    const double exact = T1 + (T0 - T1) * theta;
    INFO("Fo " << Fo);
    // Within 0.5 % of the step: 60 cells and a 0.02 K local error per step.
    CHECK(sample.load_inner_K[0] == Approx(exact).margin(0.005 * (T1 - T0)));
    ++checked;
  }
  CHECK(checked > 20);
}

TEST_CASE("a lumped body cooling by radiation takes the closed-form time", "[validation][firing]") {
  // m c dT/dt = -eps sigma A T^4 (black surroundings at 0 K) integrates to
  // t = m c / (3 eps sigma A) (1/T^3 - 1/T0^3) (Incropera & DeWitt, Fundamentals of Heat and
  // Mass Transfer, sec. 5.3, eq. 5.18). A convex cube in open space sees only the surroundings;
  // each face carries its share of the mass. Surroundings at 1 K: their sigma T^4 is 1e-13 of
  // the body's at 1000 K.
  const ScratchDir dir("firing-cooling");
  const SolvedScene s = modelled(dir, outward_box(0.2), R"(
[surroundings]
temperature = "1 K"
[defaults]
emissivity = 0.7
adiabatic = true
[surface.floor]
power = "1 W"
)");
  const double m = 2.0, c = 500, eps = 0.7, A = 0.04, T0 = 1273.15, T = 573.15;
  FiringInput in;
  in.control = "roof";
  in.start_K = T0;
  in.schedule = {{ScheduleSegment::Kind::cool, 0, T, 0}};
  // Backward Euler is first order: its global error is about the sum of the local errors,
  // here under 0.001 K per step over a few hundred steps.
  in.tolerance_K = 0.001;
  in.max_step_s = 5;
  SurfaceMass body;
  body.kind = SurfaceMass::Kind::lumped;
  body.mass = m;
  body.specific_heat = c;
  for (const char* name : {"floor", "roof", "south", "north", "west", "east"})
    in.surfaces.push_back({name, body});
  const FiringResult r = run_firing(s.model, in);
  REQUIRE(r.completed);
  const double exact =
      m * c / (3 * eps * kStefanBoltzmann * A) * (1 / std::pow(T, 3) - 1 / std::pow(T0, 3));
  // The run stops at the first step that ends below T: find when T was crossed.
  const FiringSample& last = r.samples.back();
  const FiringSample& before = r.samples[r.samples.size() - 2];
  const double crossed = before.time_s + (last.time_s - before.time_s) * (before.control_K - T) /
                                             (before.control_K - last.control_K);
  CHECK(crossed == Approx(exact).epsilon(2e-3));
}

TEST_CASE("a long hold at full power ends in the steady solve's temperatures",
          "[validation][firing]") {
  // The steady state of the transient equations is the steady balance: a firing held at full
  // power long enough must end where `solve` puts the same scene. The wall layers match the
  // steady wall = { thickness, conductivity } (an outer film of h = 1e6 W/m2K and no
  // radiation holds the case at the outside temperature, as the steady U = k / thickness
  // assumes). Our own consistency check, no published source.
  const ScratchDir dir("firing-steady");
  const std::string scene = R"(
[rays]
per_patch = 20000
[defaults]
emissivity = 0.8
adiabatic = true
wall = { thickness = "40 mm", conductivity = "0.3 W/mK", outside = "20 C" }
[surface.south]
power = "1.5 kW"
)";
  SolvedScene s = modelled(dir, box_obj(0.5, 0.5, 0.5), scene);
  PipelineOptions options;
  solve_model_exchange(&s, options);
  REQUIRE(s.result.status == ExchangeStatus::converged);
  FiringInput in;
  in.control = "east";
  in.start_K = 293.15;
  in.schedule = {{ScheduleSegment::Kind::ramp, 1.0, 2500, 0},
                 {ScheduleSegment::Kind::hold, 0, 0, 40 * 3600}};
  in.max_step_s = 600;
  SurfaceMass wall;
  wall.kind = SurfaceMass::Kind::wall;
  wall.layers = {WallLayer{0.04, 0.3, 200, 800, {}}};
  wall.outside = OuterFilm{293.15, 1e6, 0.0};
  for (const char* name : {"floor", "roof", "south", "north", "west", "east"})
    in.surfaces.push_back({name, wall});
  const FiringResult r = run_firing(s.model, in);
  REQUIRE(r.completed);
  const FiringSample& end = r.samples.back();
  CHECK(end.power_W == Approx(1500).epsilon(1e-12));
  const std::vector<SurfaceHeat> steady = surface_heat(s.model, s.result);
  for (std::size_t k = 0; k < steady.size(); ++k) {
    INFO(steady[k].name);
    // 0.1 K: the layers' cells against the steady U, and the steady state's approach.
    CHECK(end.surface_K[k] == Approx(steady[k].temperature_K).margin(0.1));
  }
}
