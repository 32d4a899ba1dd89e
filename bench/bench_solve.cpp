// Benchmark (not a test): the whole `hearthray solve -o` (the built tool, outputs included) on
// the benchmark furnace cut into one patch per triangle (~100k patches), against Embree alone
// tracing the same number of rays, in one run. Goal: the solve within 3x the bare tracing
// time, its peak memory under 4 GiB.
//
// Embree alone: the default intersector (the fastest, so the strictest baseline), the rays
// hearthray's stratified sampler would emit, generated beforehand in batches (untimed). The
// tool runs as a child process (`--no-cache -q`); its wall time and peak resident memory come
// from wait4.
//
// Usage: hearthray_bench_solve <hearthray executable> [rays per patch] [threads]
#include <spawn.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

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

// Seconds for Embree alone to trace `per_patch` rays from every patch.
double embree_alone_seconds(const Scene& scene, const PatchSet& patches, std::uint64_t per_patch,
                            int threads, std::uint64_t* missed) {
  tbb::task_arena arena(threads);
  const bench::EmbreeAlone plain(scene, false);
  double seconds = 0;
  *missed = 0;
  for (std::uint32_t first = 0; first < patches.size(); first += kPatchesPerBatch) {
    const auto last =
        std::uint32_t(std::min<std::size_t>(patches.size(), first + kPatchesPerBatch));
    const std::vector<Ray> rays = bench::make_rays(scene, patches, per_patch, first, last);
    std::uint64_t miss = 0;
    seconds += plain.trace(arena, rays, &miss);
    *missed += miss;
  }
  return seconds;
}

struct ChildRun {
  int status = -1;
  double seconds = 0;
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
  std::uint64_t missed = 0;
  const double embree = embree_alone_seconds(plan.scene, plan.patches, rays, threads, &missed);
  std::printf("  embree alone, default intersector  %8.2f s  %6.2f Mrays/s  (%llu missed)\n",
              embree, total_rays / embree / 1e6, static_cast<unsigned long long>(missed));
  std::fflush(stdout);

  const ChildRun solve =
      run_tool({tool, "solve", (dir / "furnace.toml").string(), "-o", (dir / "out").string(),
                "--no-cache", "-q", "--threads", std::to_string(threads)});
  std::printf("  hearthray solve -o (whole run)      %8.2f s  exit %d, outputs %.0f MiB\n",
              solve.seconds, solve.status, fs::exists(dir / "out") ? folder_mib(dir / "out") : 0);
  std::printf("  ratio solve / embree alone: %.2f (goal <= 3)\n", solve.seconds / embree);
  std::printf("  peak memory of the solve: %.2f GiB (goal < 4)\n", solve.peak_gib);
  fs::remove_all(dir);
  return solve.status == 0 ? 0 : 1;
}
