// `hearthray solve`: scene -> view factors (traced, or from the cache) -> thermal model ->
// exchange solve -> table and files.
#include <algorithm>
#include <filesystem>
#include <fstream>
#include <iostream>

#include "commands.hpp"
#include "hearthray/error.hpp"
#include "hearthray/thermal_model.hpp"
#include "hearthray/thermal_report.hpp"
#include "hearthray/vtu.hpp"

namespace hearthray::cli {

namespace {

namespace fs = std::filesystem;

// Up to this many patches the view factors are also written densely (CSV and JSON); beyond,
// only as a sparse Matrix Market file (a dense 20k x 20k matrix would be 3 GB of text).
constexpr std::size_t kDenseFactorFileLimit = 200;

SolveReportInfo solve_info(const SceneFile& file, const FactorRun& run, const ThermalModel& model,
                           const std::vector<std::string>& warnings) {
  SolveReportInfo info;
  info.version = kToolVersion;
  info.scene = file.path;
  info.mesh = file.mesh_path;
  info.unit = to_string(file.mesh.unit);
  info.surfaces_from = file.mesh.surfaces_from == SurfacesFrom::groups ? "groups" : "materials";
  info.rays_per_patch = run.rays_per_patch;
  info.seed = run.seed;
  info.rays_total = run.diagnostics.emitted;
  if (!run.from_cache) info.trace_seconds = run.stats.seconds;
  info.cache_file = run.cache_path;
  const FactorReportInfo factor_info = report_info(file, run);
  info.smoothing = factor_info.smoothing;
  info.smoothing_iterations = factor_info.smoothing_iterations;
  info.max_correction_sigma = run.factors.max_correction_sigma;
  const double emitted = double(std::max<std::uint64_t>(run.diagnostics.emitted, 1));
  info.escaped_fraction = double(run.diagnostics.escaped) / emitted;
  info.back_face_fraction = double(run.diagnostics.back_face_hits) / emitted;
  info.warnings = warnings;
  info.notes = model.notes;
  return info;
}

// Opens `path` for writing or throws InputError naming it.
std::ofstream open_output(const fs::path& path) {
  std::ofstream out(path, std::ios::binary | std::ios::trunc);
  if (!out) throw InputError("cannot write '" + path.string() + "'");
  return out;
}

}  // namespace

int run_solve_command(const SolveArgs& args) {
  const SceneFile file = open_scene(args.input);
  const Scene scene = load_scene(file);
  // Thermal input checked before any ray is traced: a typo costs no tracing time.
  check_thermal_input(file, scene);

  std::vector<std::string> log, cache_warnings;
  CacheChoice cache;
  cache.use = !args.no_cache;
  cache.dir = args.cache_dir;
  const FactorRun run = cached_view_factors(file, scene, args.rays, cache, &log, &cache_warnings);
  // A refused model shows its error first, then the ray warnings that may explain it (flipped
  // normals, a leak).
  auto refuse = [&](const InputError& e) {
    std::cerr << "error: " << e.what() << "\n";
    for (const std::string& w : run.diagnostics.warnings) std::cerr << "warning: " << w << "\n";
    return 2;
  };
  ThermalModel model;
  try {
    model = build_thermal_model(file, run.scene, run.patches, run.factors);
  } catch (const InputError& e) {
    return refuse(e);
  }

  // A leak folded back
  // into a closed enclosure is reported by the model's note, not as radiation to surroundings.
  std::vector<std::string> warnings = scene.warnings;
  for (const std::string& w : run.diagnostics.warnings) {
    if (!(model.leaks_folded && w.rfind("leak:", 0) == 0)) warnings.push_back(w);
  }
  for (const std::string& w : warnings) std::cerr << "warning: " << w << "\n";
  for (const std::string& w : cache_warnings) std::cerr << "warning: " << w << "\n";
  if (!args.rays.quiet) {
    for (const std::string& n : run.diagnostics.notes) std::cerr << "note: " << n << "\n";
    for (const std::string& n : model.notes) std::cerr << "note: " << n << "\n";
  }

  ExchangeResult result;
  try {
    result = solve_exchange(model.problem(), ExchangeOptions{});
  } catch (const InputError& e) {
    return refuse(e);
  }

  if (!args.rays.quiet) {
    std::cout << "hearthray solve " << file.path << "\n";
    for (const std::string& line : log) std::cout << line << "\n";
    std::cout << smoothing_line(run) << "\n\n";
  }
  if (!args.rays.quiet || args.output_dir.empty()) {
    print_solve_table(std::cout, surface_heat(model, result), heat_balance(result), result);
  }

  if (!args.output_dir.empty()) {
    const fs::path dir(args.output_dir);
    std::error_code ec;
    fs::create_directories(dir, ec);
    if (ec || !fs::is_directory(dir)) {
      throw InputError("cannot create the output folder '" + dir.string() + "'" +
                       (ec ? ": " + ec.message() : std::string()));
    }
    const FactorReportInfo factor_info = report_info(file, run);
    SolveReportInfo info = solve_info(file, run, model, warnings);
    // Dense view-factor files for a few surfaces; for many patches only the sparse one.
    const bool dense = run.factors.size() <= kDenseFactorFileLimit;
    const std::vector<std::string> factor_files =
        dense ? std::vector<std::string>{"view_factors.csv", "view_factors.json"}
              : std::vector<std::string>{"view_factors.mtx"};
    for (const std::string& name : factor_files)
      write_factors_file((dir / name).string(), run.factors, factor_info);
    write_vtu((dir / "patches.vtu").string(), run.scene, run.patches,
              solve_fields(model, result));
    info.files = {"surfaces.csv", "patches.vtu"};
    info.files.insert(info.files.end(), factor_files.begin(), factor_files.end());
    {
      std::ofstream csv = open_output(dir / "surfaces.csv");
      write_surfaces_csv(csv, model, result);
    }
    {
      std::ofstream report = open_output(dir / "report.json");
      write_solve_json(report, info, model, result);
      if (!report) throw InputError("cannot write '" + (dir / "report.json").string() + "'");
    }
    if (!args.rays.quiet) {
      std::cout << "\nwrote " << (dir / "report.json").string();
      for (const std::string& name : info.files) std::cout << ", " << name;
      std::cout << "\n";
    }
  }

  if (result.status != ExchangeStatus::converged) {
    std::cerr << "error: the exchange solve did not converge (" << to_string(result.status)
              << " after " << result.iterations << " iterations): " << result.message << "\n";
    return kExitNotConverged;
  }
  return 0;
}

}  // namespace hearthray::cli
