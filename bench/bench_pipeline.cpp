// Benchmark (not a test): the whole pipeline at the scale of real models, stage by stage, with
// the peak memory. The benchmark furnace (furnace_mesh.hpp, ~100k triangles) is cut into
// patches of a given size, or one patch per triangle, traced with a given number of rays per
// patch, smoothed, and solved with invented conditions: roof at 1250 C, walls and hearth with
// a wall loss, billets adiabatic (a temperature per patch), burner tiles with a power.
//
// Usage: hearthray_bench_pipeline <patch size in m | triangles> [rays per patch] [threads]
#include <sys/resource.h>
#include <unistd.h>

#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>

#include "furnace_mesh.hpp"
#include "hearthray/exchange.hpp"
#include "hearthray/scene_file.hpp"
#include "hearthray/smoothing.hpp"
#include "hearthray/thermal_model.hpp"
#include "hearthray/thermal_report.hpp"
#include "hearthray/tracer.hpp"
#include "hearthray/view_factors.hpp"
#include "hearthray/vtu.hpp"

using namespace hearthray;
namespace fs = std::filesystem;

namespace {

double peak_gib() {
  rusage usage{};
  getrusage(RUSAGE_SELF, &usage);
  return double(usage.ru_maxrss) / (1024.0 * 1024.0);  // ru_maxrss is in KiB on Linux
}

class Stages {
 public:
  Stages() : start_(now()), last_(start_) {}
  void done(const char* stage, const std::string& detail = "") {
    const auto t = now();
    std::printf("  %-22s %9.2f s   peak %6.2f GiB   %s\n", stage,
                std::chrono::duration<double>(t - last_).count(), peak_gib(), detail.c_str());
    std::fflush(stdout);
    last_ = t;
  }
  double total() const { return std::chrono::duration<double>(now() - start_).count(); }

 private:
  static std::chrono::steady_clock::time_point now() { return std::chrono::steady_clock::now(); }
  std::chrono::steady_clock::time_point start_, last_;
};

}  // namespace

int main(int argc, char** argv) {
  const std::string size = argc > 1 ? argv[1] : "triangles";
  const std::uint64_t rays = argc > 2 ? std::strtoull(argv[2], nullptr, 10) : 1000;
  const int threads = argc > 3 ? std::atoi(argv[3]) : 0;

  const fs::path dir =
      fs::temp_directory_path() / ("hearthray-bench-pipeline-" + std::to_string(::getpid()));
  fs::create_directories(dir);
  std::ofstream(dir / "furnace.obj") << bench::furnace_obj(true);
  const std::string patches = size == "triangles" ? "\"triangles\"" : "\"" + size + " m\"";
  std::ofstream(dir / "furnace.toml")
      << "[mesh]\nfile = \"furnace.obj\"\n"
      << "[rays]\nper_patch = " << rays << "\nseed = 1\n"
      << "[defaults]\nemissivity = 0.85\nadiabatic = true\npatches = " << patches << "\n"
      << "[surface.roof]\ntemperature = \"1250 C\"\n"
      << "[surface.hearth]\nwall = { U = \"1.2 W/m2K\", outside = \"30 C\" }\n"
      << "[surface.wall_south]\nwall = { U = \"1.5 W/m2K\", outside = \"30 C\" }\n"
      << "[surface.wall_north]\nwall = { U = \"1.5 W/m2K\", outside = \"30 C\" }\n"
      << "[surface.wall_east]\nwall = { U = \"1.5 W/m2K\", outside = \"30 C\" }\n"
      << "[surface.wall_west]\nwall = { U = \"1.5 W/m2K\", outside = \"30 C\" }\n"
      << "[surface.tile_0]\npower = \"4 kW\"\n[surface.tile_1]\npower = \"4 kW\"\n"
      << "[surface.tile_2]\npower = \"4 kW\"\n[surface.tile_3]\npower = \"4 kW\"\n"
      << "[surface.tile_4]\npower = \"4 kW\"\n[surface.tile_5]\npower = \"4 kW\"\n";

  std::printf("pipeline benchmark: furnace, patches %s, %llu rays per patch, %d threads\n",
              size.c_str(), static_cast<unsigned long long>(rays), threads);
  Stages stages;
  const SceneFile file = read_scene_file((dir / "furnace.toml").string());
  const Scene base = load_scene(file);
  stages.done("load mesh", std::to_string(base.triangles.size()) + " triangles");
  Discretised d = discretise(file, base);
  stages.done("patches", std::to_string(d.patches.size()) + " patches, " +
                             std::to_string(d.scene.triangles.size()) + " triangles");
  const Tracer tracer(d.scene);
  stages.done("tracer (Embree BVH)");
  ViewFactorOptions options;
  options.rays_for_patch = d.rays;
  options.threads = threads;
  TraceStats stats;
  Tallies tallies = trace_tallies(d.scene, d.patches, tracer, options, &stats);
  stages.done("trace", std::to_string(stats.rays) + " rays, " +
                           std::to_string(stats.rays_per_second / 1e6).substr(0, 5) + " Mrays/s, " +
                           std::to_string(tallies.hit_patch.size()) + " non-zeros");
  SmoothingSummary smoothing;
  const ViewFactors factors =
      smooth_view_factors(d.patches, tallies, SmoothingOptions{}, &smoothing);
  stages.done("smoothing", std::to_string(smoothing.iterations) + " iterations, row error " +
                               std::to_string(smoothing.max_row_error));
  const ThermalModel model = build_thermal_model(file, d.scene, d.patches, std::move(factors));
  stages.done("thermal model", std::to_string(model.nodes.size()) + " nodes, " +
                                   std::to_string(model.faces.size()) + " faces");
  const ExchangeResult result = solve_exchange(model.problem(), ExchangeOptions{});
  stages.done("exchange solve", to_string(result.status) + ", " +
                                    std::to_string(result.iterations) + " Newton iterations, " +
                                    "residual " + std::to_string(result.final_residual_W) + " W");
  write_vtu((dir / "patches.vtu").string(), d.scene, d.patches, solve_fields(model, result));
  stages.done("write patches.vtu",
              std::to_string(fs::file_size(dir / "patches.vtu") / (1024 * 1024)) + " MiB");
  std::printf("  total %.1f s, peak memory %.2f GiB\n", stages.total(), peak_gib());
  fs::remove_all(dir);
  return result.status == ExchangeStatus::converged ? 0 : 1;
}
