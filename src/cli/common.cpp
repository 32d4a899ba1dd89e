#include "common.hpp"

#include <unistd.h>

#include <cmath>
#include <cstdio>
#include <iostream>

namespace hearthray::cli {

namespace {

// "\r  tracing  42 %  3.1 Mrays/s  12 s left" on a terminal; nothing otherwise.
void show_progress(const TraceProgress& p) {
  const double fraction = p.rays_total ? double(p.rays_done) / double(p.rays_total) : 1.0;
  const double rate = p.seconds > 0 ? double(p.rays_done) / p.seconds : 0.0;
  const double left = rate > 0 ? double(p.rays_total - p.rays_done) / rate : 0.0;
  std::fprintf(stderr, "\r  tracing %5.1f %%  %6.2f Mrays/s  %6.0f s left ", 100 * fraction,
               rate / 1e6, std::ceil(left));
  std::fflush(stderr);
}

}  // namespace

FactorRun run_view_factors(const SceneFile& file, const Scene& scene,
                           const RaySettings& settings) {
  FactorRun run;
  run.rays_per_patch = settings.rays.value_or(file.rays_per_patch.value_or(kDefaultRaysPerPatch));
  run.seed = settings.seed.value_or(file.seed.value_or(kDefaultSeed));
  run.patches = make_surface_patches(scene);

  ViewFactorOptions options;
  options.rays_per_patch = run.rays_per_patch;
  options.seed = run.seed;
  options.threads = settings.threads;
  const bool show = !settings.quiet && isatty(fileno(stderr));
  if (show) options.progress = show_progress;

  const Tracer tracer(scene, options.tracer);
  run.tallies = trace_tallies(scene, run.patches, tracer, options, &run.stats);
  if (show) std::fprintf(stderr, "\r%60s\r", "");

  run.diagnostics = diagnose_rays(scene, run.patches, run.tallies, analyse_topology(scene));
  if (settings.raw) {
    run.factors = raw_view_factors(run.patches, run.tallies);
  } else {
    run.factors = smooth_view_factors(run.patches, run.tallies, SmoothingOptions{}, &run.smoothing);
  }
  return run;
}

FactorReportInfo report_info(const SceneFile& file, const FactorRun& run) {
  FactorReportInfo info;
  info.scene = file.path.empty() ? file.mesh_path : file.path;
  info.seed = run.seed;
  info.rays_per_patch = run.rays_per_patch;
  info.trace_seconds = run.stats.seconds;
  info.rays_per_second = run.stats.rays_per_second;
  info.threads = run.stats.threads;
  if (run.factors.smoothed) {
    info.smoothing = "constrained maximum likelihood (Daun, Morton & Howell 2005)";
    info.smoothing_iterations = run.smoothing.iterations;
    info.max_row_error = run.smoothing.max_row_error;
    info.max_reciprocity_error = run.smoothing.max_reciprocity_error;
  } else {
    info.smoothing = "none (raw)";
  }
  info.warnings = run.diagnostics.warnings;
  return info;
}

void print_warnings(const Scene& scene, const RayDiagnostics& diagnostics, bool notes) {
  for (const auto& w : scene.warnings) std::cerr << "warning: " << w << "\n";
  for (const auto& w : diagnostics.warnings) std::cerr << "warning: " << w << "\n";
  if (notes)
    for (const auto& n : diagnostics.notes) std::cerr << "note: " << n << "\n";
}

std::string smoothing_line(const FactorRun& run) {
  char buffer[256];
  if (!run.factors.smoothed) return "reciprocity and closure: not enforced (--raw)";
  std::snprintf(buffer, sizeof buffer,
                "reciprocity and closure: constrained maximum likelihood (Daun, Morton & "
                "Howell 2005), %d iterations%s; largest correction %.2f standard errors",
                run.smoothing.iterations, run.smoothing.converged ? "" : " (NOT converged)",
                run.factors.max_correction_sigma);
  return buffer;
}

}  // namespace hearthray::cli
