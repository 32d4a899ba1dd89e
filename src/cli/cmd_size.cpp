// `hearthray size`: for each scene (a panel layout of one room), the least heater power that
// meets a comfort target, the comfort verdicts at that power, a ranking by power, and with
// -o the maps and one HTML report for the client (library: hearthray/heating_plan.hpp,
// hearthray/client_report.hpp).
#include <algorithm>
#include <filesystem>
#include <iostream>
#include <nlohmann/json.hpp>

#include "commands.hpp"
#include "core/text.hpp"
#include "hearthray/client_report.hpp"
#include "hearthray/comfort_report.hpp"
#include "hearthray/heating_plan.hpp"
#include "hearthray/units.hpp"
#include "output_folder.hpp"
#include "size_report.hpp"

namespace hearthray::cli {
namespace {

namespace fs = std::filesystem;

HeatingTarget target_from(const SizeArgs& args) {
  HeatingTarget t;
  const bool operative = args.operative_C.has_value(), pmv = !args.pmv.empty();
  if (operative == pmv)
    throw InputError(
        "give one target: --operative 21 (C; with --at zone, points or NAME,...) or "
        "--pmv -0.5,0.5");
  if (pmv) {
    if (args.pmv.size() != 2 || !(args.pmv[0] < args.pmv[1]))
      throw InputError("--pmv expects two numbers low,high with low below high, e.g. -0.5,0.5");
    t.kind = TargetKind::pmv_band;
    t.pmv_low = args.pmv[0], t.pmv_high = args.pmv[1];
    if (!args.at.empty())
      throw InputError("--at goes with --operative; --pmv looks at every point");
  } else {
    t.operative_K = *args.operative_C + kZeroCelsius;
    if (args.at.empty() || (args.at.size() == 1 && args.at[0] == "zone")) {
      t.kind = TargetKind::operative_zone_mean;
    } else {
      t.kind = TargetKind::operative_points;
      if (!(args.at.size() == 1 && args.at[0] == "points")) t.points = args.at;
    }
  }
  std::string error;
  if (!t.IsValid(&error)) throw InputError(error);
  return t;
}

void print_plan(std::ostream& out, const std::string& name, const SizedLayout& l) {
  const HeatingPlan& p = l.plan;
  std::vector<std::string> each;
  for (std::size_t k = 0; k < p.heaters.size(); ++k)
    each.push_back(p.heaters[k] + " " + rounded("%.0f W", p.heater_power_W[k]));
  out << name << ": " << (p.reached ? "" : "NOT REACHED, ") << rounded("%.0f W", p.power_W) << " ("
      << join_at_most(each, 6) << "; the scene gives " << rounded("%.0f W", p.scene_power_W)
      << "), " << p.solves << " solves\n";
  if (!p.message.empty()) out << "  " << p.message << "\n";
  if (p.split == PowerSplit::least && p.reached)
    out << "  split: " << p.split_note << "; in the scene's proportions "
        << rounded("%.0f W", p.proportional_power_W) << "\n";
  out << "  " << state_line(l) << "\n";
  for (const ComfortVerdict& v : p.verdicts)
    out << "  ["
        << (!v.assessed ? "n/a "
            : v.pass    ? "pass"
                        : "FAIL")
        << "] " << v.what << ": " << v.detail << "\n";
}

void print_ranking(std::ostream& out, const std::vector<SizedLayout>& layouts,
                   const std::vector<std::string>& names) {
  const std::vector<std::size_t> order = rank_by_power(layouts);
  out << "\nranked by the power they need:\n";
  for (std::size_t r = 0; r < order.size(); ++r) {
    const HeatingPlan& p = layouts[order[r]].plan;
    const std::size_t failed = std::count_if(p.verdicts.begin(), p.verdicts.end(),
                                             [](auto& v) { return v.assessed && !v.pass; });
    out << "  " << r + 1 << ". " << names[order[r]] << "  "
        << (p.reached ? rounded("%.0f W", p.power_W) : "not reached") << "  "
        << (failed ? std::to_string(failed) + " verdict(s) failed" : "all verdicts met") << "\n";
  }
}

}  // namespace

int run_size_command(const SizeArgs& args) {
  const HeatingTarget target = target_from(args);
  if (!args.output_dir.empty()) check_output_folder(args.output_dir);  // before the work
  CacheChoice cache;
  cache.use = !args.no_cache;
  cache.dir = args.cache_dir;
  std::vector<SizedLayout> layouts(args.inputs.size());
  std::vector<std::string> names;
  for (std::size_t k = 0; k < args.inputs.size(); ++k) {
    names.push_back(fs::path(args.inputs[k]).stem().string());
    SolvedScene& s = layouts[k].scene;
    RaySettings rays = args.rays;  // several layouts: each one's warnings and notes name it
    if (args.inputs.size() > 1) rays.scene_label = names.back();
    if (const int status = solve_scene_printing(args.inputs[k], rays, cache, true, &s))
      return status;
    HeatingPlanOptions plan_options;
    plan_options.split =
        args.split == "proportional" ? PowerSplit::proportional : PowerSplit::least;
    layouts[k].plan = plan_heating(&s, target, pipeline_options(args.rays), plan_options);
    end_progress_line();
    layouts[k].cautions = comfort_cautions(s.run.scene, layouts[k].plan.surfaces);
  }
  std::cout << "hearthray size: the least heater power for " << describe(target) << "\n"
            << kSizeMethod << "\n\n";
  for (std::size_t k = 0; k < layouts.size(); ++k) {
    if (k) std::cout << "\n";
    print_plan(std::cout, names[k], layouts[k]);
  }
  if (layouts.size() > 1) print_ranking(std::cout, layouts, names);
  std::cout << "\nsources of the limits:\n";
  for (const ComfortVerdict& v : layouts[0].plan.verdicts)
    std::cout << "  " << v.what << ": " << v.source << "\n";
  std::cout << "\ncautions:\n";
  for (const std::string& c : size_cautions(layouts, names)) std::cout << "  - " << c << "\n";
  // A ray target missed in any layout: exit 5 as solve does, after the outputs.
  auto ray_target_status = [&] {
    return targets_status(layouts, args.inputs,
                          [](const SizedLayout& l) -> const FactorRun& { return l.scene.run; });
  };
  if (args.output_dir.empty()) return ray_target_status();
  OutputFolder out(args.output_dir);  // written whole: see output_folder.hpp
  std::vector<std::string> files = write_size_outputs(out.folder(), target, layouts, names);
  write_manifest(out, folder_manifest("size", args.inputs, files));
  std::cout << "\nwrote " << out.target() << ": " << join_at_most(files, 12) << "\n";
  return ray_target_status();
}

}  // namespace hearthray::cli
