// `hearthray comfort` and `hearthray compare`: a scene solved as `solve` does it, then the
// comfort figures at the points of its [comfort] table (library: hearthray/comfort.hpp).
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <iostream>
#include <sstream>

#include "commands.hpp"
#include "core/text.hpp"
#include "hearthray/comfort.hpp"
#include "hearthray/comfort_report.hpp"
#include "hearthray/error.hpp"
#include "hearthray/thermal_report.hpp"
#include "hearthray/units.hpp"

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
  if (const int status = solve_scene_printing(input, args.rays, cache_choice(args), true, &s))
    return status;
  if (s.result.status != ExchangeStatus::converged) {
    std::cerr << "error: " << input << ": the exchange solve did not converge ("
              << to_string(s.result.status) << "): " << s.result.message
              << "; no comfort figures without surface temperatures\n";
    return kExitNotConverged;
  }
  SceneComfort comfort = scene_comfort(s, pipeline_options(args.rays));
  end_progress_line();
  print_warnings(comfort.warnings);
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
  out << "air " << rounded("%.1f C", in.air_K - kZeroCelsius) << ", "
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

}  // namespace

int run_comfort_command(const ComfortArgs& args) {
  const std::string& input = args.inputs.at(0);
  ComfortRun r;
  if (const int status = run_comfort(input, args, &r)) return status;
  if (!args.rays.quiet) {
    std::cout << "hearthray comfort " << input << "\n";
    std::cout << cache_log_line(r.solved.run) << "\n";
  }
  print_report(std::cout, r);
  if (args.output_dir.empty()) return 0;

  const fs::path dir = make_output_dir(args.output_dir);
  std::vector<std::string> files = {"comfort.csv", "comfort.txt"};
  {
    std::ofstream csv = open_output(dir / "comfort.csv");
    write_comfort_csv(csv, r.points);
  }
  {
    std::ofstream text = open_output(dir / "comfort.txt");
    text << "hearthray comfort " << input << "\n";
    print_report(text, r);
  }
  const bool grid = std::any_of(r.points.begin(), r.points.end(),
                                [](const PointComfort& p) { return p.point.grid_i >= 0; });
  if (grid) {
    MapOptions options;
    options.heaters = r.heater_names;
    const std::pair<MapQuantity, std::string> maps[] = {
        {MapQuantity::mean_radiant, "map_mean_radiant"},
        {MapQuantity::operative, "map_operative"},
        {MapQuantity::asymmetry, "map_asymmetry"}};
    for (const auto& [q, name] : maps) {  // each as PNG and as SVG
      const Picture map = comfort_map(r.solved.run.scene, r.points, q, options);
      for (const char* extension : {".png", ".svg"}) {
        write_picture((dir / (name + extension)).string(), map);
        files.push_back(name + extension);
      }
    }
  }
  if (!args.rays.quiet) {
    std::cout << "\nwrote " << dir.string() << ": ";
    for (std::size_t k = 0; k < files.size(); ++k) std::cout << (k ? ", " : "") << files[k];
    std::cout << "\n";
  }
  return 0;
}

int run_compare_command(const ComfortArgs& args) {
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
  row("share within limits",
      [](const ComfortRun&, const S& s) { return rounded("%.0f %%", 100 * s.within_both); });

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
               "warm wall 23 K (ISO 7730 Table A.4, ASHRAE 55; recalled from memory).\n"
               "\ncautions:\n";
  // Cautions about one scene first, named; then the general ones, once.
  std::vector<Caution> general;
  for (std::size_t k = 0; k < runs.size(); ++k) {
    for (const Caution& c : runs[k].cautions) {
      if (!c.general()) {
        std::cout << "  - " << head[k + 1] << ": " << c.text << "\n";
      } else if (std::none_of(general.begin(), general.end(),
                              [&](const Caution& g) { return g.kind == c.kind; })) {
        general.push_back(c);
      }
    }
  }
  for (const Caution& c : general) std::cout << "  - " << c.text << "\n";
  return 0;
}

}  // namespace hearthray::cli
