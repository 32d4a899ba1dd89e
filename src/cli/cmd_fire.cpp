// `hearthray fire`: a firing over time from the scene's [firing] table.
#include <filesystem>
#include <iostream>
#include <nlohmann/json.hpp>

#include "commands.hpp"
#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/firing_report.hpp"
#include "hearthray/version.hpp"
#include "output_folder.hpp"

namespace hearthray::cli {
namespace fs = std::filesystem;

namespace {

void write_fire_outputs(const SolveArgs& args, const SolvedScene& solved, const FiringResult& r) {
  const FiringInput& in = *solved.file.firing;
  OutputFolder out(args.output_dir);
  const std::string name = fs::path(solved.file.path).stem().string();
  std::vector<std::string> files = {"firing.csv"};
  {
    std::ofstream csv = open_output(out.file("firing.csv"));
    write_firing_csv(csv, r);
  }
  const Picture temperatures =
      firing_temperature_picture(r, "Temperatures in the firing \u2014 " + name);
  const Picture power = firing_power_picture(r, in, "Heating power in the firing \u2014 " + name);
  for (const char* extension : {".png", ".svg"}) {
    write_picture(out.file("firing_temperatures" + std::string(extension)), temperatures);
    write_picture(out.file("firing_power" + std::string(extension)), power);
    files.push_back("firing_temperatures" + std::string(extension));
    files.push_back("firing_power" + std::string(extension));
  }
  nlohmann::json j;
  j["tool"] = std::string("hearthray ") + kVersion;
  j["scene"] = solved.file.path;
  j["files"] = files;
  j["firing"] = nlohmann::json::parse(firing_report_json(r, in));
  commit_with_report(
      out, [&](std::ostream& report) { report << j.dump(2) << '\n'; }, files, args.rays.quiet);
}

}  // namespace

int run_fire_command(const SolveArgs& args) {
  if (!args.output_dir.empty()) check_output_folder(args.output_dir);  // before the work
  {
    const SceneFile file = open_scene(args.input);
    if (!file.firing)
      throw InputError(args.input +
                       ": no [firing] table: add one with control = \"SURFACE\" and a schedule, "
                       "e.g. schedule = [{ ramp = \"100 K/h\", to = \"600 C\" }, "
                       "{ hold = \"30 min\" }, { cool = \"natural\", to = \"100 C\" }]");
    if (file.gas) throw InputError(args.input + ": a firing with [gas] is not modelled yet");
  }
  CacheChoice cache;
  cache.use = !args.no_cache;
  cache.dir = args.cache_dir;
  SolvedScene solved;
  if (const int status = solve_scene_printing(args.input, args.rays, cache, false, &solved, false))
    return status;
  FiringOptions options;
  options.threads = args.rays.threads;
  const FiringResult r = run_firing(solved.model, *solved.file.firing, options);
  if (!args.rays.quiet || args.output_dir.empty()) {
    std::cout << "hearthray fire " << solved.file.path << "\n"
              << cache_log_line(solved.run) << "\n";
    if (solved.run.target.used) std::cout << target_line(solved.run) << "\n";
    std::cout << "\n";
    print_firing_summary(std::cout, r, *solved.file.firing);
  }
  if (!args.output_dir.empty()) write_fire_outputs(args, solved, r);
  if (!r.completed) {
    std::cerr << "error: the firing could not be completed: " << r.message << "\n";
    return kExitNotConverged;
  }
  return target_status(solved.run);
}

}  // namespace hearthray::cli
