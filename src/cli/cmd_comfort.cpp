// `hearthray comfort` and `hearthray compare`: a scene solved as `solve` does it, then the
// comfort figures at the points of its [comfort] table (library: hearthray/comfort.hpp).
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <iostream>
#include <map>
#include <nlohmann/json.hpp>
#include <optional>
#include <sstream>

#include "commands.hpp"
#include "core/text.hpp"
#include "hearthray/client_report.hpp"
#include "hearthray/comfort.hpp"
#include "hearthray/comfort_client_report.hpp"
#include "hearthray/comfort_report.hpp"
#include "hearthray/error.hpp"
#include "hearthray/thermal_report.hpp"
#include "hearthray/units.hpp"
#include "output_folder.hpp"

namespace hearthray::cli {

namespace {

namespace fs = std::filesystem;

struct ComfortRun {
  SolvedScene solved;
  std::vector<PointComfort> points;
  std::vector<SurfaceHeat> surfaces;
  HeaterSummary heaters;
  std::vector<Caution> cautions;
  std::vector<std::string> heater_names;
};

CacheChoice cache_choice(const ComfortArgs& args) {
  CacheChoice cache;
  cache.use = !args.no_cache;
  cache.dir = args.cache_dir;
  return cache;
}

// Solves `input` and computes its comfort figures. Returns an exit code (0 when all went well).
int run_comfort(const std::string& input, const ComfortArgs& args, ComfortRun* out) {
  SolvedScene& s = out->solved;
  RaySettings rays = args.rays;  // compare: each scene's warnings and notes name it
  if (args.inputs.size() > 1) rays.scene_label = fs::path(input).stem().string();
  if (const int status = solve_scene_printing(input, rays, cache_choice(args), true, &s))
    return status;
  if (s.result.status != ExchangeStatus::converged) {
    std::cerr << "error: " << input << ": the exchange solve did not converge ("
              << to_string(s.result.status) << "): " << s.result.message
              << "; no comfort figures without surface temperatures\n";
    return kExitNotConverged;
  }
  SceneComfort comfort = scene_comfort(s, pipeline_options(args.rays));
  end_progress_line();
  print_warnings(comfort.warnings, rays.scene_label);
  out->points = std::move(comfort.points);
  out->surfaces = surface_heat(s.model, s.result);
  out->heaters = summarise_heaters(s.model, out->surfaces);
  out->cautions = comfort_cautions(s.run.scene, out->surfaces);
  for (std::size_t k = 0; k < s.model.surface_conditions.size(); ++k) {
    const NodeCondition& c = s.model.surface_conditions[k];
    if ((c.kind == ConditionKind::power || c.kind == ConditionKind::heat_flux) && c.value > 0)
      out->heater_names.push_back(s.model.surface_names[k]);
  }
  return 0;
}

void print_report(std::ostream& out, const ComfortRun& r) {
  const ComfortInput& in = *r.solved.file.comfort;
  const std::optional<RoomAirResult>& air = r.solved.room_air;
  out << "air " << rounded("%.1f C", (air ? air->air_K : in.air_K) - kZeroCelsius)
      << (air ? " (solved from the room's heat balance)" : "") << ", "
      << rounded("%.2g m/s", in.air_speed) << "; " << in.rays
      << " rays per point for the body and for each of six planes, seed " << r.solved.run.seed
      << "\n";
  if (r.heaters.count) {
    out << "heaters: " << r.heaters.count << ", " << rounded("%.0f W", r.heaters.power_W)
        << " in total, surface up to " << rounded("%.1f C", r.heaters.surface_max_K - kZeroCelsius)
        << "\n";
  }
  out << "\n";
  print_comfort_table(out, r.points, summarise_comfort(r.points));
  out << "\ncautions:\n";
  for (const Caution& c : r.cautions) out << "  - " << c.text << "\n";
}

bool has_grid(const ComfortRun& r) {
  return std::any_of(r.points.begin(), r.points.end(),
                     [](const PointComfort& p) { return p.point.grid_i >= 0; });
}

using MapRanges = std::map<MapQuantity, std::pair<double, double>>;

std::pair<double, double> given_range(const std::vector<double>& range) {
  if (range.size() != 2 || !(range[0] < range[1]))
    throw InputError("--range expects two numbers low,high (C) with low below high");
  return {range[0], range[1]};
}

const std::pair<MapQuantity, const char*> kMaps[] = {
    {MapQuantity::mean_radiant, "map_mean_radiant"},
    {MapQuantity::operative, "map_operative"},
    {MapQuantity::asymmetry, "map_asymmetry"}};

// The three maps of one scene, named prefix + map name + extension, on the given ranges (the
// points' own where none is given).
void write_maps(OutputFolder& out, const std::string& prefix, const ComfortRun& r,
                const MapRanges& ranges, const std::string& title_suffix,
                const std::vector<std::string>& extensions, std::vector<std::string>* files) {
  MapOptions options;
  options.heaters = r.heater_names;
  options.title_suffix = title_suffix;
  for (const auto& [q, name] : kMaps) {
    const auto it = ranges.find(q);
    options.range_lo = it == ranges.end() ? std::nullopt : std::optional(it->second.first);
    options.range_hi = it == ranges.end() ? std::nullopt : std::optional(it->second.second);
    const Picture map = comfort_map(r.solved.run.scene, r.points, q, options);
    for (const std::string& extension : extensions) {
      write_picture(out.file(prefix + name + extension), map);
      files->push_back(prefix + name + extension);
    }
  }
}

// The maps of one scene (written by write_maps with `prefix`) as figures of the report.
std::vector<ReportFigure> map_figures(const fs::path& dir, const std::string& prefix,
                                      const std::string& scene) {
  const char* captions[] = {
      "Mean radiant temperature over the occupied zone",
      "Operative temperature over the occupied zone",
      "Radiant asymmetry over the occupied zone, against the limits on the colour bar"};
  std::vector<ReportFigure> out;
  for (std::size_t k = 0; k < 3; ++k)
    out.push_back({std::string(captions[k]) + ", " + scene +
                       " (plan; heaters outlined, glass "
                       "in blue, named points marked)",
                   dir / (prefix + kMaps[k].second + ".png")});
  return out;
}

ComfortReportInput report_input(const ComfortRun& r, const std::string& input,
                                const std::string& name) {
  ComfortReportInput in;
  in.name = name;
  in.scene_path = input;
  in.scene = &r.solved.run.scene;
  in.comfort = &*r.solved.file.comfort;
  in.seed = r.solved.run.seed;
  in.surfaces = r.surfaces;
  in.heaters = r.heaters;
  in.points = r.points;
  in.cautions = r.cautions;
  return in;
}

// compare -o: every scene's maps on one colour range per quantity (the union of the scenes'
// own ranges, or --range for the temperatures), so equal colours mean equal values.
std::vector<std::string> write_compared_maps(const ComfortArgs& args, OutputFolder& out,
                                             const std::vector<ComfortRun>& runs,
                                             const std::vector<std::string>& names) {
  MapRanges ranges;
  for (const auto& [q, name] : kMaps) {
    std::pair<double, double> all{INFINITY, -INFINITY};
    for (const ComfortRun& r : runs) {
      if (!has_grid(r)) continue;
      const auto [lo, hi] = map_range(r.points, q);
      all = {std::min(all.first, lo), std::max(all.second, hi)};
    }
    if (all.first < all.second) ranges[q] = all;
    if (!args.range.empty() && q != MapQuantity::asymmetry) ranges[q] = given_range(args.range);
  }
  std::vector<std::string> files;
  for (std::size_t k = 0; k < runs.size(); ++k)
    if (has_grid(runs[k]))
      write_maps(out, names[k] + "_", runs[k], ranges, " \u2014 " + names[k], {".png", ".svg"},
                 &files);
  std::cout << "\nmaps on one colour range each (mean radiant "
            << rounded("%.1f", ranges[MapQuantity::mean_radiant].first) << " to "
            << rounded("%.1f", ranges[MapQuantity::mean_radiant].second) << " C, operative "
            << rounded("%.1f", ranges[MapQuantity::operative].first) << " to "
            << rounded("%.1f", ranges[MapQuantity::operative].second) << " C, asymmetry "
            << rounded("%.1f", ranges[MapQuantity::asymmetry].first) << " to "
            << rounded("%.1f", ranges[MapQuantity::asymmetry].second) << " K) in " << out.target()
            << ": " << join(files) << "\n";
  return files;
}

// Rows of the compare table for the named points (not the grid), by name, in the order they
// first appear: operative temperature and whether within the limits at each.
void named_point_rows(const std::vector<ComfortRun>& runs,
                      std::vector<std::vector<std::string>>* rows) {
  std::vector<std::string> names;
  for (const ComfortRun& r : runs)
    for (const PointComfort& p : r.points)
      if (p.point.grid_i < 0 && std::find(names.begin(), names.end(), p.point.name) == names.end())
        names.push_back(p.point.name);
  for (const std::string& name : names) {
    std::vector<std::string> row = {"at " + name + ": t_o (C), limits"};
    for (const ComfortRun& r : runs) {
      const auto it = std::find_if(r.points.begin(), r.points.end(), [&](const PointComfort& p) {
        return p.point.grid_i < 0 && p.point.name == name;
      });
      row.push_back(it == r.points.end() ? "-"
                                         : rounded("%.1f", it->operative_K - kZeroCelsius) +
                                               (it->within_limits() ? ", within" : ", OVER"));
    }
    rows->push_back(row);
  }
}

// The points over a limit, by scene: a share alone hides which they are.
void print_points_over(const std::vector<ComfortRun>& runs, const std::vector<std::string>& names) {
  std::cout << "\npoints over a limit:\n";
  for (std::size_t k = 0; k < runs.size(); ++k) {
    std::vector<std::string> over;
    for (const PointComfort* p : summarise_comfort(runs[k].points).failing)
      over.push_back(failing_text(*p));
    std::cout << "  " << names[k] << ": " << (over.empty() ? "none" : join_at_most(over, 20))
              << "\n";
  }
}

// Cautions about one scene first, named; then the general ones, once.
void print_compare_cautions(const std::vector<ComfortRun>& runs,
                            const std::vector<std::string>& names) {
  std::cout << "\ncautions:\n";
  std::vector<Caution> general;
  for (std::size_t k = 0; k < runs.size(); ++k) {
    for (const Caution& c : runs[k].cautions) {
      if (!c.general()) {
        std::cout << "  - " << names[k] << ": " << c.text << "\n";
      } else if (std::none_of(general.begin(), general.end(),
                              [&](const Caution& g) { return g.kind == c.kind; })) {
        general.push_back(c);
      }
    }
  }
  for (const Caution& c : general) std::cout << "  - " << c.text << "\n";
}

// A row of the terminal's compare table in the words of a printed one.
std::vector<std::string> printed_row(std::vector<std::string> row) {
  const std::pair<const char*, const char*> words[] = {{"(C)", "(\u00b0C)"},
                                                       {" - ", " to "},
                                                       {"OVER", "over a limit"},
                                                       {"temp.", "temperature"},
                                                       {"t_o", "operative"}};
  for (std::string& cell : row)
    for (const auto& [from, to] : words)
      for (std::size_t at = cell.find(from); at != std::string::npos;
           at = cell.find(from, at + std::string(to).size()))
        cell.replace(at, std::string(from).size(), to);
  return row;
}

// compare -o: the client report: the side-by-side table (`rows`, the header row first), then
// each scene's sections with its maps (written by write_compared_maps).
void write_compare_report(const ComfortArgs& args, OutputFolder& out,
                          const std::vector<ComfortRun>& runs,
                          const std::vector<std::vector<std::string>>& rows) {
  const std::vector<std::string>& head = rows.front();
  std::vector<ComfortReportInput> reports;
  for (std::size_t k = 0; k < runs.size(); ++k) {
    const std::string& name = head[k + 1];
    reports.push_back(report_input(runs[k], args.inputs[k], name));
    if (has_grid(runs[k])) reports.back().maps = map_figures(out.folder(), name + "_", name);
  }
  ReportTable table;
  table.caption = "The scenes side by side";
  table.header = head;
  for (auto it = rows.begin() + 1; it != rows.end(); ++it) table.rows.push_back(printed_row(*it));
  write_client_report(compare_client_report(reports, table), out.file("report.html"));
}

}  // namespace

int run_comfort_command(const ComfortArgs& args) {
  if (!args.output_dir.empty()) check_output_folder(args.output_dir);  // before the work
  const std::string& input = args.inputs.at(0);
  ComfortRun r;
  if (const int status = run_comfort(input, args, &r)) return status;
  if (!args.rays.quiet) {
    std::cout << "hearthray comfort " << input << "\n";
    std::cout << cache_log_line(r.solved.run) << "\n";
    if (r.solved.run.target.used) std::cout << target_line(r.solved.run) << "\n";
  }
  print_report(std::cout, r);
  // A ray target missed: exit 5 as solve does, after the outputs of the last round.
  if (args.output_dir.empty()) return target_status(r.solved.run);

  OutputFolder out(args.output_dir);
  std::vector<std::string> files = {"comfort.csv", "comfort.txt"};
  {
    std::ofstream csv = open_output(out.file("comfort.csv"));
    write_comfort_csv(csv, r.points);
  }
  {
    std::ofstream text = open_output(out.file("comfort.txt"));
    text << "hearthray comfort " << input << "\n";
    print_report(text, r);
  }
  if (has_grid(r)) {
    MapRanges ranges;
    for (MapQuantity q : {MapQuantity::mean_radiant, MapQuantity::operative})
      if (!args.range.empty()) ranges[q] = given_range(args.range);
    write_maps(out, "", r, ranges, "", {".png", ".svg"}, &files);
  }
  ComfortReportInput report = report_input(r, input, fs::path(input).stem().string());
  if (has_grid(r)) report.maps = map_figures(out.folder(), "", report.name);
  write_client_report(comfort_client_report(report), out.file("report.html"));
  files.push_back("report.html");
  write_manifest(out, folder_manifest("comfort", {input}, files));
  if (!args.rays.quiet) {
    std::cout << "\nwrote " << out.target() << ": ";
    for (std::size_t k = 0; k < files.size(); ++k) std::cout << (k ? ", " : "") << files[k];
    std::cout << "\n";
  }
  return target_status(r.solved.run);
}

int run_compare_command(const ComfortArgs& args) {
  if (!args.output_dir.empty()) check_output_folder(args.output_dir);  // before the work
  std::vector<ComfortRun> runs(args.inputs.size());
  for (std::size_t k = 0; k < args.inputs.size(); ++k) {
    if (const int status = run_comfort(args.inputs[k], args, &runs[k])) return status;
  }
  std::vector<std::string> head = {""};
  for (const std::string& in : args.inputs) head.push_back(fs::path(in).stem().string());
  std::vector<std::vector<std::string>> rows = {head};
  auto row = [&](const std::string& label, auto cell) {
    std::vector<std::string> r = {label};
    for (const ComfortRun& run : runs) r.push_back(cell(run, summarise_comfort(run.points)));
    rows.push_back(r);
  };
  using S = ComfortSummary;
  row("heated surfaces",
      [](const ComfortRun& r, const S&) { return std::to_string(r.heaters.count); });
  row("heater power (W)",
      [](const ComfortRun& r, const S&) { return rounded("%.0f", r.heaters.power_W); });
  row("heater surface, hottest (C)", [](const ComfortRun& r, const S&) {
    return r.heaters.count ? rounded("%.1f", r.heaters.surface_max_K - kZeroCelsius) : "-";
  });
  row("points", [](const ComfortRun&, const S& s) { return std::to_string(s.points); });
  row("mean radiant temp. min-max (C)", [](const ComfortRun&, const S& s) {
    return rounded("%.1f", s.mean_radiant_K.min - kZeroCelsius) + " - " +
           rounded("%.1f", s.mean_radiant_K.max - kZeroCelsius);
  });
  row("operative temp. min-max (C)", [](const ComfortRun&, const S& s) {
    return rounded("%.1f", s.operative_K.min - kZeroCelsius) + " - " +
           rounded("%.1f", s.operative_K.max - kZeroCelsius);
  });
  row("operative temp. mean (C)", [](const ComfortRun&, const S& s) {
    return rounded("%.1f", s.operative_K.mean - kZeroCelsius);
  });
  row("vertical asymmetry max (K)",
      [](const ComfortRun&, const S& s) { return rounded("%.1f", s.vertical_K.max); });
  row("horizontal asymmetry max (K)",
      [](const ComfortRun&, const S& s) { return rounded("%.1f", s.horizontal_K.max); });
  row("worst asymmetry / its limit",
      [](const ComfortRun&, const S& s) { return rounded("%.2f", s.worst_ratio); });
  row("points within both limits",
      [](const ComfortRun&, const S& s) { return share_text(s.count_both, s.points); });
  named_point_rows(runs, &rows);

  std::vector<std::size_t> width(head.size(), 0);
  for (const auto& r : rows)
    for (std::size_t c = 0; c < r.size(); ++c) width[c] = std::max(width[c], r[c].size());
  std::cout << "hearthray compare\n\n";
  for (const auto& r : rows) {
    for (std::size_t c = 0; c < r.size(); ++c) {
      const std::string fill(width[c] - r[c].size(), ' ');
      std::cout << (c == 0 ? r[c] + fill : "   " + fill + r[c]);
    }
    std::cout << "\n";
  }
  std::cout << "\nlimits (PD about 5 %): warm ceiling 5 K, cool wall 10 K, cool ceiling 14 K, "
               "warm wall 23 K (ISO 7730 Table A.4, ASHRAE 55; recalled from memory).\n";
  print_compare_cautions(runs, std::vector<std::string>(head.begin() + 1, head.end()));
  print_points_over(runs, std::vector<std::string>(head.begin() + 1, head.end()));
  if (!args.output_dir.empty()) {
    OutputFolder out(args.output_dir);
    std::vector<std::string> files = write_compared_maps(
        args, out, runs, std::vector<std::string>(head.begin() + 1, head.end()));
    write_compare_report(args, out, runs, rows);
    files.push_back("report.html");
    write_manifest(out, folder_manifest("compare", args.inputs, files));
    std::cout << "client report: " << (fs::path(out.target()) / "report.html").string() << "\n";
  }
  // A ray target missed in any scene: exit 5 as solve does (each named in a warning).
  return targets_status(runs, args.inputs,
                        [](const ComfortRun& r) -> const FactorRun& { return r.solved.run; });
}

}  // namespace hearthray::cli
