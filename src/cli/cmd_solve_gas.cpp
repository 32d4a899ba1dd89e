// `hearthray solve` for a scene with a [gas] table: the gas stages (hearthray/gas_run.hpp)
// instead of the gray enclosure exchange; tables and files from hearthray/gas_report.hpp.
#include <filesystem>
#include <fstream>
#include <iostream>

#include "commands.hpp"
#include "hearthray/cache.hpp"
#include "hearthray/gas_report.hpp"
#include "hearthray/gas_run.hpp"
#include "hearthray/thermal_report.hpp"
#include "hearthray/units.hpp"
#include "hearthray/version.hpp"
#include "hearthray/vtu.hpp"
#include "output_folder.hpp"

namespace hearthray::cli {

namespace {

// The gas cache: --cache DIR, else the default folder; none with --no-cache.
void use_gas_cache(const SolveArgs& args, const SceneFile& file, const PatchPlan& plan,
                   GasRunOptions& options) {
  if (args.no_cache) return;
  options.cache_dir = args.cache_dir.empty() ? default_cache_dir() : args.cache_dir;
  if (options.cache_dir.empty()) return;
  options.mesh_bytes = read_mesh_bytes(file.mesh_path);
  options.panels = file.panels;
  options.mesh = file.mesh;
  options.patch_specs = plan.specs;
}

}  // namespace

int run_gas_solve(const SolveArgs& args, const SceneFile& file) {
  namespace fs = std::filesystem;
  const Scene loaded = load_scene(file);
  const PipelineOptions options = pipeline_options(args.rays);
  if (options.target_error || file.target_error)
    throw InputError(
        "a target error (--target-error, [rays] target_error) is not available for a scene "
        "with [gas] yet: give the rays per patch instead");
  const PatchPlan plan = plan_scene(file, loaded, options);
  const Tracer tracer(plan.scene);
  GasRunOptions gas_options;
  gas_options.seed = args.rays.seed.value_or(file.seed.value_or(kDefaultSeed));
  gas_options.rays_for_patch = plan.rays;
  gas_options.threads = args.rays.threads;
  gas_options.force = args.rays.force;
  use_gas_cache(args, file, plan, gas_options);
  if (file.surroundings_K) gas_options.surroundings_temperature = *file.surroundings_K;
  const GasRun run =
      run_gas(*file.gas, plan.scene, plan.patches, tracer,
              gas_patch_conditions(resolve_thermal(file, plan.scene), plan.scene, plan.patches),
              gas_options);
  std::vector<std::string> names;
  for (const Patch& p : plan.patches.patches) names.push_back(p.name);

  if (!args.rays.quiet || args.output_dir.empty()) {
    std::cout << "hearthray solve " << file.path << " (radiating gas in "
              << run.exchange.zone_count() << " zones, " << plan.patches.size() << " patches)\n\n";
    print_gas_surfaces(std::cout, run, plan.scene, plan.patches);
    std::cout << "\n";
    print_gas_table(std::cout, run);
    std::cout << kEngineeringCaution << "\n";
    std::cout << run.cache_note << "\n";
  }
  if (!args.output_dir.empty()) {
    OutputFolder out(args.output_dir);
    GasReportInfo info{kVersion,
                       file.path,
                       file.mesh_path,
                       gas_options.seed,
                       {"zones.csv", "gas_patches.csv", "zones.vtu", "patches.vtu", "gas_zones.png",
                        "gas_zones.svg"}};
    {
      std::ofstream csv = open_output(out.file("zones.csv"));
      write_zones_csv(csv, run);
    }
    {
      std::ofstream csv = open_output(out.file("gas_patches.csv"));
      write_gas_patches_csv(csv, run, names);
    }
    write_zones_vtu(out.file("zones.vtu"), run);
    PatchField temperature{"temperature", "°C", {}}, flux{"net radiative flux", "W/m²", {}};
    for (std::size_t p = 0; p < plan.patches.size(); ++p) {
      temperature.values.push_back(run.solve.patches[p].temperature - kZeroCelsius);
      flux.values.push_back(run.solve.patches[p].net_out / plan.patches.patches[p].area);
    }
    write_vtu(out.file("patches.vtu"), plan.scene, plan.patches, {temperature, flux},
              {{"converged", run.solve.converged ? 1 : 0}});
    const Picture cut = zone_cut_picture(run, plan.scene);
    for (const char* name : {"gas_zones.png", "gas_zones.svg"}) write_picture(out.file(name), cut);
    commit_with_report(
        out, [&](std::ostream& report) { write_gas_report(report, info, run, names); }, info.files,
        args.rays.quiet);
  }
  for (const std::string& w : run.warnings) std::cerr << "warning: " << w << "\n";
  if (!run.solve.converged) {
    std::cerr << "error: the zone solve did not converge: " << run.solve.message << "\n";
    return kExitNotConverged;
  }
  return 0;
}

}  // namespace hearthray::cli
