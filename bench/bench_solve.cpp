// Benchmark (not a test): the whole `hearthray solve -o` (the built tool, outputs included) on
// the benchmark furnace cut into one patch per triangle (~100k patches), against Embree alone
// tracing the same number of rays, in one run. Goal: the solve within 3x the bare tracing
// time, its peak memory under 4 GiB.
//
// Both sides' CPU seconds (all threads) are printed too, with their ratio: other work on a
// shared machine disturbs them far less than the wall-clock times, which the goal is about.
//
// Embree alone: the default intersector (the fastest, so the strictest baseline: the goal's
// ratio) and, on the same rays, the robust one (it leaks no rays, as hearthray's tracing does
// not: the second ratio printed); as many rays as the tool traces, drawn by hearthray's
// stratified sampler (the tool itself uses its default, sobol) beforehand in batches
// (untimed). The
// tool runs as a child process (`--no-cache -q`); its wall time and peak resident memory come
// from wait4.
//
// Usage: hearthray_bench_solve <hearthray executable> [rays per patch] [threads]
#include <spawn.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <array>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "embree_alone.hpp"
#include "furnace_mesh.hpp"
#include "hearthray/pipeline.hpp"

extern char** environ;

using namespace hearthray;
namespace fs = std::filesystem;

namespace {

constexpr std::uint32_t kPatchesPerBatch = 4096;

double cpu_seconds(const rusage& usage) {
  return double(usage.ru_utime.tv_sec) + 1e-6 * double(usage.ru_utime.tv_usec) +
         double(usage.ru_stime.tv_sec) + 1e-6 * double(usage.ru_stime.tv_usec);
}

double process_cpu_seconds() {
  rusage usage{};
  getrusage(RUSAGE_SELF, &usage);
  return cpu_seconds(usage);
}

struct Timing {
  double seconds = 0;  // wall-clock
  double cpu = 0;      // CPU seconds of all threads: less disturbed by other work on the machine
};

// Embree alone tracing `per_patch` rays from every patch, with the default intersector
// (timing[0]) and the robust one (timing[1]), on the same rays.
std::array<Timing, 2> embree_alone(const Scene& scene, const PatchSet& patches,
                                   std::uint64_t per_patch, int threads,
                                   std::array<std::uint64_t, 2>* missed) {
  tbb::task_arena arena(threads);
  const bench::EmbreeAlone tracers[2] = {bench::EmbreeAlone(scene, false),
                                         bench::EmbreeAlone(scene, true)};
  std::array<Timing, 2> timing;
  *missed = {0, 0};
  for (std::uint32_t first = 0; first < patches.size(); first += kPatchesPerBatch) {
    const auto last =
        std::uint32_t(std::min<std::size_t>(patches.size(), first + kPatchesPerBatch));
    const std::vector<Ray> rays = bench::make_rays(scene, patches, per_patch, first, last);
    for (int k = 0; k < 2; ++k) {
      std::uint64_t miss = 0;
      const double cpu = process_cpu_seconds();
      timing[k].seconds += tracers[k].trace(arena, rays, &miss);
      timing[k].cpu += process_cpu_seconds() - cpu;
      (*missed)[k] += miss;
    }
  }
  return timing;
}

struct ChildRun {
  int status = -1;
  double seconds = 0;
  double cpu = 0;
  double peak_gib = 0;
};

// Runs the tool and waits for it: exit status, wall time, peak resident memory.
ChildRun run_tool(const std::vector<std::string>& args) {
  std::vector<char*> argv;
  for (const std::string& a : args) argv.push_back(const_cast<char*>(a.c_str()));
  argv.push_back(nullptr);
  ChildRun run;
  const auto t0 = std::chrono::steady_clock::now();
  pid_t pid = 0;
  if (posix_spawn(&pid, argv[0], nullptr, nullptr, argv.data(), environ) != 0) return run;
  int status = 0;
  rusage usage{};
  wait4(pid, &status, 0, &usage);
  run.seconds = bench::seconds_since(t0);
  run.status = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  run.cpu = cpu_seconds(usage);
  run.peak_gib = double(usage.ru_maxrss) / (1024.0 * 1024.0);  // KiB on Linux
  return run;
}

double folder_mib(const fs::path& dir) {
  double bytes = 0;
  for (const auto& entry : fs::directory_iterator(dir)) bytes += double(entry.file_size());
  return bytes / (1024.0 * 1024.0);
}

}  // namespace

int main(int argc, char** argv) {
  if (argc < 2) {
    std::fprintf(stderr, "usage: hearthray_bench_solve <hearthray> [rays per patch] [threads]\n");
    return 2;
  }
  const std::string tool = fs::absolute(argv[1]).string();
  const std::uint64_t rays = argc > 2 ? std::strtoull(argv[2], nullptr, 10) : 1000;
  const int threads = argc > 3 ? std::atoi(argv[3]) : tbb::info::default_concurrency();
  const fs::path dir =
      fs::temp_directory_path() / ("hearthray-bench-solve-" + std::to_string(::getpid()));
  fs::create_directories(dir);
  std::ofstream(dir / "furnace.obj") << bench::furnace_obj(true);
  std::ofstream(dir / "furnace.toml") << bench::furnace_toml("triangles", rays);

  const SceneFile file = read_scene_file((dir / "furnace.toml").string());
  const Scene scene = load_scene(file);
  PipelineOptions options;
  options.threads = threads;
  const PatchPlan plan = plan_scene(file, scene, options);
  const double total_rays = double(rays) * double(plan.patches.size());
  std::printf(
      "solve benchmark: furnace, %zu patches (one per triangle), %llu rays per patch "
      "(%.1f M rays), %d threads\n",
      plan.patches.size(), static_cast<unsigned long long>(rays), total_rays / 1e6, threads);
  std::fflush(stdout);
  std::array<std::uint64_t, 2> missed{};
  const std::array<Timing, 2> embree =
      embree_alone(plan.scene, plan.patches, rays, threads, &missed);
  const char* names[2] = {"default intersector", "robust intersector "};
  for (int k = 0; k < 2; ++k) {
    std::printf("  embree alone, %s %8.2f s  %6.2f Mrays/s  (%llu missed; CPU %.1f s)\n", names[k],
                embree[k].seconds, total_rays / embree[k].seconds / 1e6,
                static_cast<unsigned long long>(missed[k]), embree[k].cpu);
  }
  std::fflush(stdout);

  const ChildRun solve =
      run_tool({tool, "solve", (dir / "furnace.toml").string(), "-o", (dir / "out").string(),
                "--no-cache", "-q", "--threads", std::to_string(threads)});
  std::printf(
      "  hearthray solve -o (whole run)      %8.2f s  exit %d, outputs %.0f MiB (CPU %.1f s)\n",
      solve.seconds, solve.status, fs::exists(dir / "out") ? folder_mib(dir / "out") : 0,
      solve.cpu);
  std::printf("  ratio solve / embree alone: %.2f (goal <= 3); of CPU seconds: %.2f\n",
              solve.seconds / embree[0].seconds, solve.cpu / embree[0].cpu);
  std::printf("  against the robust intersector (no leaks, as hearthray traces): %.2f; CPU %.2f\n",
              solve.seconds / embree[1].seconds, solve.cpu / embree[1].cpu);
  std::printf("  peak memory of the solve: %.2f GiB (goal < 4)\n", solve.peak_gib);
  fs::remove_all(dir);
  return solve.status == 0 ? 0 : 1;
}
