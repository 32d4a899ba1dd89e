// The large (sparse) path of the gas stage: sparse exchange areas, their smoothing and the
// Newton-Krylov zone solve, against the dense path on the same scene; its energy balance, its
// independence from the thread count, and a problem above the dense limit.
#include <tbb/task_arena.h>

#include <catch2/catch.hpp>
#include <cmath>

#include "hearthray/zone_solve.hpp"
#include "support/gas_fixtures.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

// An invented box furnace, 2 x 1 x 1 m, with a 0.5 m cube of load held at 800 K; walls of
// unknown temperature with a loss through them and a film to the gas; four zones in plug flow,
// 60 % and 40 % of 200 kW released in the first two.
struct Furnace {
  Scene scene = load_obj_text(box_with_load_obj(2, 1, 1, 0.75, 0.25, 0.25, 0.5), "furnace");
  PatchSet patches;
  GrayGasSet gas = GrayGasSet::wsgg({0.18, 0.09});
  Combustion combustion;

  Furnace() {
    patches = make_patches(
        scene, std::vector<PatchSpec>(scene.surfaces.size(), {PatchSpec::Mode::per_triangle, 0}));
    CombustionInput ci;
    ci.firing_rate = 200e3;
    combustion = burn(ci);
  }

  GasExchange trace(GasStorage storage, int threads = 0) const {
    const Tracer tracer(scene);
    GasTraceOptions options;
    options.rays_per_patch = 4000;
    options.rays_per_cell = 4000;
    options.storage = storage;
    options.threads = threads;
    return trace_gas_exchange(scene, patches, tracer, {4, 1, 1}, gas.absorption_coefficients(),
                              options);
  }

  ZoneSolveInput input(const GasExchange& x) const {
    ZoneSolveInput in;
    in.exchange = &x;
    in.gases = &gas;
    const int load = scene.find_surface("load");
    for (std::size_t p = 0; p < patches.size(); ++p) {
      ZonePatchCondition c;
      if (int(patches.patches[p].surface) == load) {
        c = {0.85, true, 800.0, 0.0};
      } else {
        c = {0.7, false, 1000.0, 0.0};
        c.wall_U = 1.2;
        c.outside_temperature = 300;
      }
      c.convection_h = 15;
      c.convection_zone = int(p % x.zone_count());
      in.patches.push_back(c);
    }
    in.zones.assign(x.zone_count(), {false, 1500.0, 0.0});
    in.zones[0].heat_release = 0.6 * combustion.firing_rate;
    in.zones[1].heat_release = 0.4 * combustion.firing_rate;
    for (std::size_t z = 0; z < x.zone_count(); ++z) in.flow_order.push_back(z);
    in.combustion = &combustion;
    return in;
  }
};

// Everything a solve reports, for bitwise comparison.
std::vector<double> all_figures(const ZoneSolveResult& r) {
  std::vector<double> v{r.balance_error, r.flue_temperature, r.to_surroundings, r.max_residual};
  for (const ZonePatchResult& p : r.patches)
    v.insert(v.end(), {p.temperature, p.emitted, p.absorbed, p.convection_in, p.wall_loss});
  for (const ZoneGasResult& z : r.zones)
    v.insert(v.end(), {z.temperature, z.emitted, z.absorbed, z.enthalpy_out, z.convection_out});
  return v;
}

}  // namespace

TEST_CASE("sparse and dense gas paths agree on one furnace", "[gas][gas-large]") {
  const Furnace f;
  GasExchange dense = f.trace(GasStorage::dense);
  GasExchange sparse = f.trace(GasStorage::sparse);
  REQUIRE(dense.dense());
  REQUIRE_FALSE(sparse.dense());
  REQUIRE(sparse.rows() == dense.rows());
  // The same rays give the same raw exchange areas, entry by entry (only the storage differs).
  for (std::size_t g = 0; g < dense.gas_count(); ++g)
    for (std::size_t i = 0; i < dense.rows(); ++i)
      for (std::size_t j = 0; j < dense.rows(); ++j) {
        CHECK(sparse.entry(g, i, j) == dense.entry(g, i, j));
        CHECK(sparse.sparse_sigma[g].coeff(Eigen::Index(i), Eigen::Index(j)) ==
              dense.sigma[g](Eigen::Index(i), Eigen::Index(j)));
      }
  const GasSmoothingSummary sd = smooth_gas_exchange(dense);
  const GasSmoothingSummary ss = smooth_gas_exchange(sparse);
  CHECK(ss.converged);
  CHECK(ss.max_row_error < 1e-12);
  CHECK(ss.max_reciprocity_error < 1e-14);
  CHECK(ss.max_correction_sigma == Approx(sd.max_correction_sigma).epsilon(1e-6));
  // Smoothed: the two differ only by the order of summation in the scaling (round-off).
  for (std::size_t g = 0; g < dense.gas_count(); ++g)
    for (std::size_t i = 0; i < dense.rows(); ++i) {
      const double scale = std::max(dense.row_target(g, i), 1e-300);
      for (std::size_t j = 0; j < dense.rows(); ++j)
        CHECK(std::fabs(sparse.entry(g, i, j) - dense.entry(g, i, j)) <= 1e-12 * scale);
    }

  const ZoneSolveResult rd = solve_zones(f.input(dense));
  const ZoneSolveResult rs = solve_zones(f.input(sparse));
  REQUIRE(rd.converged);
  REQUIRE(rs.converged);
  CHECK_FALSE(rd.iterative);
  CHECK(rs.iterative);
  CHECK(rs.linear_iterations > 0);
  // Tolerances: our own (no source), far above what the solver tolerances (1e-11 of the heat
  // flows, radiosities to 1e-13) leave, far below anything a user reads. The energy balance
  // must close to 1e-9 of the firing rate (the first law; the gas issue's requirement).
  const double firing = f.combustion.firing_rate;
  CHECK(std::fabs(rs.balance_error) < 1e-9 * firing);
  for (std::size_t p = 0; p < rd.patches.size(); ++p) {
    INFO("patch " << p);
    CHECK(rs.patches[p].temperature == Approx(rd.patches[p].temperature).epsilon(1e-8));
    CHECK(std::fabs(rs.patches[p].net_out - rd.patches[p].net_out) < 1e-8 * firing);
    CHECK(std::fabs(rs.patches[p].convection_in - rd.patches[p].convection_in) < 1e-8 * firing);
  }
  for (std::size_t z = 0; z < rd.zones.size(); ++z) {
    INFO("zone " << z);
    CHECK(rs.zones[z].temperature == Approx(rd.zones[z].temperature).epsilon(1e-8));
    CHECK(std::fabs(rs.zones[z].absorbed - rd.zones[z].absorbed) < 1e-8 * firing);
  }
  CHECK(rs.flue_temperature == Approx(rd.flue_temperature).epsilon(1e-8));
  CHECK(std::fabs(rs.to_surroundings - rd.to_surroundings) < 1e-8 * firing);

  // Non-convergence is reported, not hidden: one Newton step is not enough.
  ZoneSolveInput short_run = f.input(sparse);
  short_run.max_iterations = 1;
  const ZoneSolveResult r1 = solve_zones(short_run);
  CHECK_FALSE(r1.converged);
  CHECK_THAT(r1.message, Catch::Contains("did not converge"));
}

TEST_CASE("the sparse gas path does not depend on the thread count", "[gas][gas-large]") {
  const Furnace f;
  std::vector<std::vector<double>> figures;
  std::vector<double> areas;
  for (int threads : {1, 2}) {
    GasExchange x = f.trace(GasStorage::sparse, threads);
    tbb::task_arena arena(threads);
    arena.execute([&] {
      smooth_gas_exchange(x);
      const ZoneSolveResult r = solve_zones(f.input(x));
      REQUIRE(r.converged);
      figures.push_back(all_figures(r));
    });
    const SparseMatrix& S = x.sparse_S.back();
    if (threads == 1)
      areas.assign(S.valuePtr(), S.valuePtr() + S.nonZeros());
    else
      CHECK(std::vector<double>(S.valuePtr(), S.valuePtr() + S.nonZeros()) == areas);
  }
  CHECK(figures[0] == figures[1]);
}

TEST_CASE("a gas problem above the dense limit runs on the sparse path", "[gas][gas-large]") {
  // A unit cube cut into 13 x 13 squares a face, one patch per triangle: 2028 patches and
  // 8 cells, past the 2000 rows of the dense path. Few rays: only that it runs, converges and
  // balances is checked here.
  const Scene cube = load_obj_text(unit_cube_obj(13), "cube");
  const PatchSet patches = make_patches(
      cube, std::vector<PatchSpec>(cube.surfaces.size(), {PatchSpec::Mode::per_triangle, 0}));
  REQUIRE(patches.size() == 2028);
  const GrayGasSet gas = GrayGasSet::gray(0.5);
  const Tracer tracer(cube);
  GasTraceOptions options;
  options.rays_per_patch = 16;
  options.rays_per_cell = 256;
  GasExchange x =
      trace_gas_exchange(cube, patches, tracer, {2, 2, 2}, gas.absorption_coefficients(), options);
  REQUIRE_FALSE(x.dense());
  CHECK(x.non_zeros() < x.rows() * x.rows() / 10);
  const GasSmoothingSummary s = smooth_gas_exchange(x);
  CHECK(s.converged);
  ZoneSolveInput in;
  in.exchange = &x;
  in.gases = &gas;
  // The floor held at 600 K, the other walls adiabatic; each of the eight zones releases
  // 1.25 kW, with no flow: all 10 kW leave through the floor.
  const int floor = cube.find_surface("floor");
  for (std::size_t p = 0; p < patches.size(); ++p)
    in.patches.push_back(int(patches.patches[p].surface) == floor
                             ? ZonePatchCondition{0.9, true, 600.0, 0.0}
                             : ZonePatchCondition{0.6, false, 900.0, 0.0});
  in.zones.assign(x.zone_count(), {false, 1200.0, 1250.0});
  const ZoneSolveResult r = solve_zones(in);
  INFO(r.message);
  REQUIRE(r.converged);
  CHECK(r.iterative);
  double to_floor = 0;
  for (std::size_t p = 0; p < patches.size(); ++p)
    if (int(patches.patches[p].surface) == floor) to_floor -= r.patches[p].net_out;
  // Conservation (the first law): what the zones release reaches the held floor.
  CHECK(to_floor == Approx(10e3).epsilon(1e-9));
  CHECK(std::fabs(r.balance_error) < 1e-9 * 10e3);
}
