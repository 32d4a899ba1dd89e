// Benchmark (not a test): the whole pipeline at the scale of real models, stage by stage, with
// the peak memory. The benchmark furnace (furnace_mesh.hpp, ~100k triangles) is cut into
// patches of a given size, or one patch per triangle, traced with a given number of rays per
// patch, smoothed, and solved with invented conditions: roof at 1250 C, walls and hearth with
// a wall loss, billets adiabatic (a temperature per patch), burner tiles with a power; then
// the per-patch fields (VTU) and the compressed matrix file (HDF5) are written.
//
// Usage: hearthray_bench_pipeline <patch size in m | triangles> [rays per patch] [threads]
// Each stage's line gives its wall-clock and CPU seconds (all threads: on a shared machine the
// steadier figure) and the peak memory so far. HEARTHRAY_BENCH_KEEP_H5=PATH keeps a copy of the
// matrix file there (to study its compression).
#include <sys/resource.h>
#include <tbb/task_arena.h>
#include <unistd.h>

#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "furnace_mesh.hpp"
#include "hearthray/io.hpp"
#include "hearthray/pipeline.hpp"
#include "hearthray/thermal_report.hpp"
#include "hearthray/vtu.hpp"

using namespace hearthray;
namespace fs = std::filesystem;

namespace {

double cpu_seconds() {
  rusage usage{};
  getrusage(RUSAGE_SELF, &usage);
  return double(usage.ru_utime.tv_sec + usage.ru_stime.tv_sec) +
         1e-6 * double(usage.ru_utime.tv_usec + usage.ru_stime.tv_usec);
}

double peak_gib() {
  rusage usage{};
  getrusage(RUSAGE_SELF, &usage);
  return double(usage.ru_maxrss) / (1024.0 * 1024.0);  // ru_maxrss is in KiB on Linux
}

// Stage lines: the wall-clock and CPU time since the previous line and the peak memory so far.
class Stages {
 public:
  Stages() : start_(now()), last_(start_), last_cpu_(cpu_seconds()) {}
  void done(const std::string& stage, const std::string& detail = "") {
    const auto t = now();
    const double cpu = cpu_seconds();
    std::printf("  %-22s %9.2f s  cpu %8.2f s   peak %6.2f GiB   %s\n", stage.c_str(),
                std::chrono::duration<double>(t - last_).count(), cpu - last_cpu_, peak_gib(),
                detail.c_str());
    std::fflush(stdout);
    last_ = t;
    last_cpu_ = cpu;
  }
  double total() const { return std::chrono::duration<double>(now() - start_).count(); }

 private:
  static std::chrono::steady_clock::time_point now() { return std::chrono::steady_clock::now(); }
  std::chrono::steady_clock::time_point start_, last_;
  double last_cpu_;
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
  std::ofstream(dir / "furnace.toml") << bench::furnace_toml(size, rays);

  std::printf("pipeline benchmark: furnace, patches %s, %llu rays per patch, %d threads\n",
              size.c_str(), static_cast<unsigned long long>(rays), threads);
  Stages stages;
  const SceneFile file = read_scene_file((dir / "furnace.toml").string());
  const Scene base = load_scene(file);
  stages.done("load mesh", std::to_string(base.triangles.size()) + " triangles");
  // Each stage's line is printed when the next one starts (the pipeline's progress reports).
  PipelineOptions options;
  options.threads = threads;
  std::string stage = "patches";
  options.progress = [&](const PipelineProgress& p) {
    const std::string name = to_string(p.stage);
    if (name == stage) return;
    stages.done(stage);
    stage = name;
  };
  SolvedScene solved = model_scene(file, base, options);
  const FactorRun& run = solved.run;
  const ThermalModel& model = solved.model;
  stages.done(stage, std::to_string(model.nodes.size()) + " nodes, " +
                         std::to_string(model.faces.size()) + " faces");
  stage = to_string(PipelineStage::exchange);
  std::printf(
      "  (%zu patches, %zu triangles; %llu rays, %.2f Mrays/s; smoothing %d iterations, "
      "%d conjugate-gradient iterations, row error %g)\n",
      run.patches.size(), run.scene.triangles.size(),
      static_cast<unsigned long long>(run.stats.rays), run.stats.rays_per_second / 1e6,
      run.smoothing.iterations, run.smoothing.linear_iterations, run.smoothing.max_row_error);
  solve_model_exchange(&solved, options);
  const ExchangeResult& result = solved.result;
  stages.done(stage, to_string(result.status) + ", " + std::to_string(result.iterations) +
                         " Newton iterations, " + std::to_string(result.linear_iterations) +
                         " GMRES iterations, residual " + std::to_string(result.final_residual_W) +
                         " W");
  write_vtu((dir / "patches.vtu").string(), run.scene, run.patches, solve_fields(model, result));
  stages.done("write patches.vtu",
              std::to_string(fs::file_size(dir / "patches.vtu") / (1024 * 1024)) + " MiB");
  {
    // The matrix file as solve -o writes it (compressed on the benchmark's threads).
    tbb::task_arena arena(threads > 0 ? threads : tbb::task_arena::automatic);
    arena.execute([&] {
      write_factors_hdf5((dir / "view_factors.h5").string(), model.factors, run.scene, run.patches,
                         FactorReportInfo{});
    });
  }
  stages.done("write view_factors.h5",
              std::to_string(fs::file_size(dir / "view_factors.h5") / (1024 * 1024)) + " MiB");
  if (const char* keep = std::getenv("HEARTHRAY_BENCH_KEEP_H5"))
    fs::copy_file(dir / "view_factors.h5", keep, fs::copy_options::overwrite_existing);
  const double nonzeros = double(model.factors.F.nonZeros());
  std::printf(
      "  total %.1f s (cpu %.1f s), peak memory %.2f GiB, %.1f bytes per stored non-zero of F "
      "(%.1f M non-zeros)\n",
      stages.total(), cpu_seconds(), peak_gib(), peak_gib() * 1024 * 1024 * 1024 / nonzeros,
      nonzeros / 1e6);
  fs::remove_all(dir);
  return result.status == ExchangeStatus::converged ? 0 : 1;
}
