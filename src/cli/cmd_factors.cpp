// `hearthray factors`: the view-factor matrix of a scene, to the terminal or to files.
#include <iostream>

#include "commands.hpp"

namespace hearthray::cli {

int run_factors_command(const FactorsArgs& args) {
  const SceneFile file = open_scene_with_unit(args.input, args.unit);
  const Scene scene = load_scene(file);
  const FactorRun run = run_view_factors(file, scene, pipeline_options(args.rays));
  end_progress_line();
  print_warnings(run.warnings);
  if (!args.rays.quiet) print_notes(run.notes);

  if (args.outputs.empty()) {
    print_factors_table(std::cout, run.factors);
  } else {
    const FactorReportInfo info = report_info(file, run);
    for (const std::string& path : args.outputs) {
      write_factors_file(path, run.factors, info);
      if (!args.rays.quiet) std::cout << "wrote " << path << "\n";
    }
  }
  if (!args.rays.quiet) {
    std::cout << run.factors.size() << " surfaces, " << run.rays_per_patch << " rays each (seed "
              << run.seed << "), " << run.stats.rays << " rays in " << run.stats.seconds << " s ("
              << run.stats.rays_per_second / 1e6 << " Mrays/s on " << run.stats.threads
              << " threads)\n"
              << smoothing_line(run) << "\n";
  }
  return 0;
}

}  // namespace hearthray::cli
