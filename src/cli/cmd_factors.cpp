// `hearthray factors`: the view-factor matrix of a scene, to the terminal or to files, with
// the patch table and the VTU of the patches beside each file. Tallies through the cache, as
// `solve` takes them.
#include <iostream>

#include "commands.hpp"
#include "core/text.hpp"
#include "hearthray/patch_geometry.hpp"
#include "output_folder.hpp"

namespace hearthray::cli {

int run_factors_command(const FactorsArgs& args) {
  const SceneFile file = open_scene_with_unit(args.input, args.unit);
  const Scene scene = load_scene(file);
  CacheChoice cache;
  cache.use = !args.no_cache;
  cache.dir = args.cache_dir;
  const FactorRun run = run_view_factors(file, scene, pipeline_options(args.rays, &cache));
  end_progress_line();
  print_warnings(run.warnings);
  print_no_cache_folder(run);
  if (!args.rays.quiet) print_notes(run.notes);

  if (args.outputs.empty()) {
    print_factors_table(std::cout, run.factors);
  } else {
    const FactorReportInfo info = report_info(file, run);
    // All written in staging folders beside them, then put in place together: an interrupted
    // run leaves none of its files (each with its patch files, shared by F.csv and F.json).
    StagedFiles staged;
    for (const std::string& path : args.outputs) {
      const std::string to = staged.file(path);
      write_factors_file(to, run.factors, info, &run.scene, &run.patches);
      write_patch_files_beside(to, run.scene, run.patches);
    }
    for (const std::string& written : staged.commit())
      if (!args.rays.quiet) std::cout << "wrote " << written << "\n";
  }
  if (!args.rays.quiet) {
    std::cout << cache_log_line(run) << "\n";
    std::cout << run.factors.size() << " patches, " << run.rays_per_patch << " rays each (seed "
              << run.seed << ")";
    if (!run.from_cache())
      std::cout << ", " << run.stats.rays << " rays in " << rounded("%.3g", run.stats.seconds)
                << " s (" << rounded("%.3g", run.stats.rays_per_second / 1e6) << " Mrays/s on "
                << run.stats.threads << " threads)";
    std::cout << "\n" << smoothing_line(run) << "\n";
    if (run.target.used) std::cout << target_line(run) << "\n";
  }
  return target_status(run);
}

}  // namespace hearthray::cli
