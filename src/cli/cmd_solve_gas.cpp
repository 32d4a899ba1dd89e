// `hearthray solve` for a scene with a [gas] table: the gas stages (hearthray/gas_run.hpp)
// instead of the gray enclosure exchange; tables and files from hearthray/gas_report.hpp.
#include <filesystem>
#include <fstream>
#include <iostream>

#include "commands.hpp"
#include "hearthray/gas_report.hpp"
#include "hearthray/gas_run.hpp"
#include "hearthray/thermal_report.hpp"
#include "hearthray/units.hpp"
#include "hearthray/version.hpp"
#include "hearthray/vtu.hpp"

namespace hearthray::cli {

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
  }
  if (!args.output_dir.empty()) {
    const fs::path dir = make_output_dir(args.output_dir);
    GasReportInfo info{
        kVersion,
        file.path,
        file.mesh_path,
        gas_options.seed,
        {"zones.csv", "gas_patches.csv", "zones.vtu", "patches.vtu", "gas_zones.png"}};
    {
      std::ofstream csv = open_output(dir / "zones.csv");
      write_zones_csv(csv, run);
    }
    {
      std::ofstream csv = open_output(dir / "gas_patches.csv");
      write_gas_patches_csv(csv, run, names);
    }
    write_zones_vtu((dir / "zones.vtu").string(), run);
    PatchField temperature{"temperature", "°C", {}}, flux{"net radiative flux", "W/m²", {}};
    for (std::size_t p = 0; p < plan.patches.size(); ++p) {
      temperature.values.push_back(run.solve.patches[p].temperature - kZeroCelsius);
      flux.values.push_back(run.solve.patches[p].net_out / plan.patches.patches[p].area);
    }
    write_vtu((dir / "patches.vtu").string(), plan.scene, plan.patches, {temperature, flux},
              {{"converged", run.solve.converged ? 1 : 0}});
    write_picture((dir / "gas_zones.png").string(), zone_cut_picture(run, plan.scene));
    {
      std::ofstream report = open_output(dir / "report.json");
      write_gas_report(report, info, run, names);
      if (!report) throw InputError("cannot write '" + (dir / "report.json").string() + "'");
    }
    if (!args.rays.quiet) {
      std::cout << "\nwrote " << (dir / "report.json").string();
      for (const std::string& name : info.files) std::cout << ", " << name;
      std::cout << "\n";
    }
  }
  for (const std::string& w : run.warnings) std::cerr << "warning: " << w << "\n";
  if (!run.solve.converged) {
    std::cerr << "error: the zone solve did not converge: " << run.solve.message << "\n";
    return kExitNotConverged;
  }
  return 0;
}

}  // namespace hearthray::cli
