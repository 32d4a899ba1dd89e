// Benchmark (not a test): tracing with gas zones against the same rays without gas, on the
// benchmark furnace (bench/furnace_mesh.hpp) with a grid of about 100 zones and the four gray
// gases of the WSGG model for natural-gas products. Goal (issue 9): no more than 2x the
// gas-free time for the same rays.
//   hearthray_bench_gas [rays per surface] [threads]
#include <tbb/info.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <sstream>

#include "furnace_mesh.hpp"
#include "hearthray/gas_properties.hpp"
#include "hearthray/gas_zones.hpp"
#include "hearthray/view_factors.hpp"

using namespace hearthray;

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
  return 0;
}
