// Benchmark (not a test): tracing with gas zones against the same rays without gas, on the
// benchmark furnace (bench/furnace_mesh.hpp) with a grid of about 100 zones and the four gray
// gases of the WSGG model for natural-gas products. Goal (issue 9): no more than 2x the
// gas-free time for the same rays. Then the two paths of smoothing and zone solve (dense below
// 2000 rows, sparse above) on an empty box furnace of 4 x 3 x 2.5 m cut into n x n patches a
// wall (two patches a cell), 8 zones, plug flow: time, stored exchange areas and the largest
// temperature difference; both paths at n = 10 (1200 patches), the sparse one also at n = 22
// (5808 patches).
//   hearthray_bench_gas [rays per surface] [threads]
#include <tbb/info.h>
#include <tbb/task_arena.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <sstream>

#include "furnace_mesh.hpp"
#include "hearthray/gas_properties.hpp"
#include "hearthray/gas_zones.hpp"
#include "hearthray/view_factors.hpp"
#include "hearthray/zone_solve.hpp"

using namespace hearthray;

namespace {

// The empty box furnace, walls n x n cells of two triangles with fronts inward, one patch a
// triangle.
struct BoxFurnace {
  Scene scene;
  PatchSet patches;
  explicit BoxFurnace(int n) {
    bench::ObjWriter w;
    const double L = 4, W = 3, H = 2.5;
    w.grid("hearth", {0, 0, 0}, {L, 0, 0}, {0, W, 0}, n, n);
    w.grid("roof", {0, 0, H}, {0, W, 0}, {L, 0, 0}, n, n);
    w.grid("wall_south", {0, 0, 0}, {0, 0, H}, {L, 0, 0}, n, n);
    w.grid("wall_north", {0, W, 0}, {L, 0, 0}, {0, 0, H}, n, n);
    w.grid("wall_west", {0, 0, 0}, {0, W, 0}, {0, 0, H}, n, n);
    w.grid("wall_east", {L, 0, 0}, {0, 0, H}, {0, W, 0}, n, n);
    std::istringstream obj(w.out.str());
    scene = load_obj(obj, "box furnace");
    patches = make_patches(
        scene, std::vector<PatchSpec>(scene.surfaces.size(), {PatchSpec::Mode::per_triangle, 0}));
  }
};

struct PathRun {
  double trace_s = 0, smooth_s = 0, solve_s = 0;
  std::size_t stored = 0;
  ZoneSolveResult result;
};

// The hearth held at 900 K as the load, the other walls adiabatic; 8 zones along the furnace,
// 1 MW of natural gas released in the first three.
PathRun run_path(const BoxFurnace& f, GasStorage storage, int threads) {
  const Tracer tracer(f.scene);
  const GrayGasSet gas = GrayGasSet::wsgg({0.18, 0.09});
  CombustionInput ci;
  ci.firing_rate = 1e6;
  const Combustion combustion = burn(ci);
  GasTraceOptions options;
  options.rays_per_patch = 2000;
  options.rays_per_cell = 20000;
  options.threads = threads;
  options.storage = storage;
  PathRun run;
  auto clock = [] { return std::chrono::steady_clock::now(); };
  auto since = [](auto t0) {
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  };
  auto t0 = clock();
  GasExchange x = trace_gas_exchange(f.scene, f.patches, tracer, {8, 1, 1},
                                     gas.absorption_coefficients(), options);
  run.trace_s = since(t0);
  t0 = clock();
  smooth_gas_exchange(x);
  run.smooth_s = since(t0);
  run.stored = x.non_zeros();
  ZoneSolveInput in;
  in.exchange = &x;
  in.gases = &gas;
  const int hearth = f.scene.find_surface("hearth");
  for (const Patch& p : f.patches.patches)
    in.patches.push_back(int(p.surface) == hearth ? ZonePatchCondition{0.85, true, 900.0, 0.0}
                                                  : ZonePatchCondition{0.75, false, 1200.0, 0.0});
  in.zones.assign(x.zone_count(), {false, 1500.0, 0.0});
  const double share[3] = {0.5, 0.35, 0.15};
  for (std::size_t z = 0; z < x.zone_count(); ++z) {
    in.flow_order.push_back(z);
    if (z < 3) in.zones[z].heat_release = share[z] * ci.firing_rate;
  }
  in.combustion = &combustion;
  tbb::task_arena arena(threads);
  t0 = clock();
  arena.execute([&] { run.result = solve_zones(in); });
  run.solve_s = since(t0);
  return run;
}

void print_path(const char* name, std::size_t patches, const PathRun& r) {
  std::printf(
      "  %-6s %5zu patches: trace %6.2f s, smooth %6.2f s, solve %6.2f s (%s, %d Newton, %d "
      "GMRES); %.3g stored areas\n",
      name, patches, r.trace_s, r.smooth_s, r.solve_s,
      r.result.converged ? "converged" : "NOT converged", r.result.iterations,
      r.result.linear_iterations, double(r.stored));
}

void large_path_lines(int threads) {
  std::printf(
      "gas solve paths: box furnace 4 x 3 x 2.5 m, 8 zones, 4 gray gases, 2000 rays per "
      "patch, 20000 per cell\n");
  const BoxFurnace medium(10);
  const PathRun dense = run_path(medium, GasStorage::dense, threads);
  const PathRun sparse = run_path(medium, GasStorage::sparse, threads);
  print_path("dense", medium.patches.size(), dense);
  print_path("sparse", medium.patches.size(), sparse);
  double worst = 0;
  for (std::size_t z = 0; z < dense.result.zones.size(); ++z)
    worst = std::max(
        worst, std::fabs(dense.result.zones[z].temperature - sparse.result.zones[z].temperature));
  for (std::size_t p = 0; p < dense.result.patches.size(); ++p)
    worst = std::max(worst, std::fabs(dense.result.patches[p].temperature -
                                      sparse.result.patches[p].temperature));
  std::printf("  largest temperature difference dense - sparse: %.3g K\n", worst);
  const BoxFurnace fine(22);
  print_path("sparse", fine.patches.size(), run_path(fine, GasStorage::sparse, threads));
}

}  // namespace

int main(int argc, char** argv) {
  const std::uint64_t per_patch = argc > 1 ? std::strtoull(argv[1], nullptr, 10) : 200000;
  const int threads = argc > 2 ? std::atoi(argv[2]) : tbb::info::default_concurrency();
  std::istringstream obj(bench::furnace_obj(true));
  const Scene scene = load_obj(obj, "benchmark furnace");
  const PatchSet patches = make_surface_patches(scene);
  const Tracer tracer(scene);
  const GrayGasSet gas = GrayGasSet::wsgg({0.18, 0.09});
  const std::array<int, 3> cells = {8, 4, 3};  // 96 cells over 4 x 3 x 2.5 m
  const double n = double(per_patch) * double(patches.size());
  std::printf(
      "gas benchmark: %zu triangles, %zu patches, %d cells, %zu gray gases, %llu rays per "
      "patch (%.1f M rays), %d threads; best of 3 alternating runs\n",
      scene.triangles.size(), patches.size(), cells[0] * cells[1] * cells[2], gas.size(),
      static_cast<unsigned long long>(per_patch), n / 1e6, threads);

  ViewFactorOptions plain;
  plain.rays_per_patch = per_patch;
  plain.threads = threads;
  GasTraceOptions with_gas;
  with_gas.rays_per_patch = per_patch;
  with_gas.rays_per_cell = 1;  // surface rays only: the same rays as the gas-free run
  with_gas.threads = threads;
  GasTraceOptions zones = with_gas;
  zones.rays_per_patch = 1;
  zones.rays_per_cell = per_patch * patches.size() / 96;  // as many rays, from the zones
  auto seconds_of = [](auto&& f) {
    const auto t0 = std::chrono::steady_clock::now();
    f();
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  };
  double t_plain = 1e300, t_gas = 1e300, t_zones = 1e300;
  std::size_t zone_count = 0;
  for (int round = 0; round < 3; ++round) {
    t_plain = std::min(t_plain, seconds_of([&] { trace_tallies(scene, patches, tracer, plain); }));
    t_gas = std::min(t_gas, seconds_of([&] {
                       trace_gas_exchange(scene, patches, tracer, cells,
                                          gas.absorption_coefficients(), with_gas);
                     }));
    t_zones = std::min(t_zones, seconds_of([&] {
                         zone_count = trace_gas_exchange(scene, patches, tracer, cells,
                                                         gas.absorption_coefficients(), zones)
                                          .zone_count();
                       }));
  }
  const double n_zone = double(zones.rays_per_cell) * 96;
  std::printf("  surface rays, no gas (view factors)      %8.3f s %8.3f Mrays/s\n", t_plain,
              n / t_plain / 1e6);
  std::printf("  surface rays through %zu zones, 4 gases  %8.3f s %8.3f Mrays/s\n", zone_count,
              t_gas, n / t_gas / 1e6);
  std::printf("  zone rays (isotropic, from the zones)    %8.3f s %8.3f Mrays/s\n", t_zones,
              n_zone / t_zones / 1e6);
  std::printf("  ratio gas / no gas, same surface rays: %.2f (goal <= 2)\n", t_gas / t_plain);
  large_path_lines(threads);
  return 0;
}
