// What `hearthray size` prints and writes (see size_report.hpp).
#include "size_report.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <map>
#include <numeric>

#include "common.hpp"
#include "core/text.hpp"
#include "hearthray/client_report.hpp"
#include "hearthray/comfort_client_report.hpp"
#include "hearthray/picture.hpp"
#include "hearthray/units.hpp"

namespace hearthray::cli {
namespace {

namespace fs = std::filesystem;

std::string celsius(double K) {
  return rounded("%.1f C", K - kZeroCelsius);
}

// Electric radiant panels: the hazards a planner hands on (issue 12's caution).
constexpr const char* kPanelCaution =
    "Radiant panels run hot: their faces can burn on contact and must keep the maker's "
    "clearances from curtains, furniture, glass and anything that burns. Electrical "
    "connection, circuit protection and mounting follow the local electrical and building "
    "codes and the panel maker's instructions, carried out by a qualified installer. The "
    "powers here are engineering estimates for one steady design condition, not a "
    "substitute for a heat-loss calculation to the local standard or for professional design.";

const std::pair<MapQuantity, const char*> kMaps[] = {
    {MapQuantity::operative, "map_operative"},
    {MapQuantity::mean_radiant, "map_mean_radiant"},
    {MapQuantity::asymmetry, "map_asymmetry"}};

bool has_grid(const HeatingPlan& p) {
  return std::any_of(p.points.begin(), p.points.end(),
                     [](const PointComfort& c) { return c.point.grid_i >= 0; });
}

double heater_max_K(const HeatingPlan& p) {
  double hottest = 0;
  for (const SurfaceHeat& s : p.surfaces)
    if (std::find(p.heaters.begin(), p.heaters.end(), s.name) != p.heaters.end())
      hottest = std::max(hottest, s.temperature_max_K);
  return hottest;
}

std::string air_text(const SizedLayout& l) {
  if (!l.plan.room_air) return "air " + celsius(l.scene.file.comfort->air_K) + " (given)";
  const RoomAirResult& a = *l.plan.room_air;
  return "air " + celsius(a.air_K) + " (solved: ventilation " + rounded("%.0f W", a.ventilation_W) +
         ", gains " + rounded("%.0f W", a.gains_W) + ")";
}

// One map per quantity and layout, all layouts' maps of a quantity on one colour range.
std::map<std::string, std::vector<fs::path>> write_maps(const fs::path& dir,
                                                        const std::vector<SizedLayout>& layouts,
                                                        const std::vector<std::string>& names,
                                                        std::vector<std::string>* files) {
  std::map<std::string, std::vector<fs::path>> out;
  for (const auto& [q, map_name] : kMaps) {
    double lo = INFINITY, hi = -INFINITY;
    for (const SizedLayout& l : layouts) {
      if (!has_grid(l.plan)) continue;
      const auto [a, b] = map_range(l.plan.points, q);
      lo = std::min(lo, a), hi = std::max(hi, b);
    }
    for (std::size_t k = 0; k < layouts.size(); ++k) {
      if (!has_grid(layouts[k].plan)) continue;
      MapOptions options;
      options.heaters = layouts[k].plan.heaters;
      options.title_suffix =
          " \u2014 " + names[k] + " at " + rounded("%.0f W", layouts[k].plan.power_W);
      if (lo < hi) options.range_lo = lo, options.range_hi = hi;
      const std::string file = names[k] + "_" + map_name;
      const Picture map =
          comfort_map(layouts[k].scene.run.scene, layouts[k].plan.points, q, options);
      for (const char* extension : {".png", ".svg"}) {
        write_picture((dir / (file + extension)).string(), map);
        files->push_back(file + extension);
      }
      out[names[k]].push_back(dir / (file + ".png"));
    }
  }
  return out;
}

ReportTable summary_table(const std::vector<SizedLayout>& layouts,
                          const std::vector<std::string>& names) {
  ReportTable t;
  t.caption = "Power needed and comfort at that power, per layout";
  t.header = {"layout",        "power needed",     "scene's power", "air", "operative temperature",
              "hottest panel", "verdicts not met", "rank by power"};
  std::vector<std::size_t> rank(layouts.size());
  const std::vector<std::size_t> order = rank_by_power(layouts);
  for (std::size_t r = 0; r < order.size(); ++r) rank[order[r]] = r + 1;
  for (std::size_t k = 0; k < layouts.size(); ++k) {
    const HeatingPlan& p = layouts[k].plan;
    const ComfortSummary s = summarise_comfort(p.points);
    std::size_t failed = 0;
    for (const ComfortVerdict& v : p.verdicts) failed += v.assessed && !v.pass;
    t.rows.push_back({names[k], p.reached ? rounded("%.0f W", p.power_W) : "not reached",
                      rounded("%.0f W", p.scene_power_W),
                      p.room_air ? celsius(p.room_air->air_K) + " (solved)"
                                 : celsius(layouts[k].scene.file.comfort->air_K) + " (given)",
                      celsius(s.operative_K.min) + " to " + celsius(s.operative_K.max),
                      celsius(heater_max_K(p)), std::to_string(failed),
                      p.reached ? std::to_string(rank[k]) : "-"});
  }
  return t;
}

ReportTable points_table(const HeatingPlan& p) {
  ReportTable t;
  t.caption = "Named points at the power needed";
  t.header = {
      "point", "kind", "mean radiant", "operative", "vertical asymmetry", "horizontal asymmetry",
      "PMV",   "PPD"};
  for (const PointComfort& c : p.points) {
    if (c.point.grid_i >= 0) continue;
    t.rows.push_back(
        {c.point.name, to_string(c.point.body), celsius(c.mean_radiant.kelvin),
         celsius(c.operative_K),
         rounded("%.1f K", c.vertical.delta_K) + " (" + to_string(c.vertical.kind) + ")",
         rounded("%.1f K", c.horizontal.delta_K) + " (" + to_string(c.horizontal.kind) + ")",
         c.pmv ? rounded("%+.2f", c.pmv->pmv) : "-",
         c.pmv ? rounded("%.1f\u00a0%%", c.pmv->ppd) : "-"});  // no break before the %
  }
  return t;
}

constexpr const char* kNotAssessed = "not assessed: ";

ReportSection layout_section(const std::string& name, const SizedLayout& l,
                             const std::vector<fs::path>& maps) {
  const HeatingPlan& p = l.plan;
  ReportSection s;
  s.heading = "Power needed and comfort: " + name;
  s.paragraphs.push_back((p.reached ? "Power needed: " + rounded("%.0f W", p.power_W) + " in total"
                                    : "The target is not reached: " + p.message) +
                         " (" + std::to_string(p.solves) + " solves; the scene file gives " +
                         rounded("%.0f W", p.scene_power_W) + "). At that power: " + state_line(l) +
                         ".");
  s.paragraphs.push_back("On the maps each heater is outlined by a white line with a dark rim.");
  ReportTable heaters;
  heaters.caption = "Heaters at the power needed";
  heaters.header = {"surface", "power", "surface temperature"};
  for (std::size_t k = 0; k < p.heaters.size(); ++k) {
    std::string temperature = "-";
    for (const SurfaceHeat& h : p.surfaces)
      if (h.name == p.heaters[k]) temperature = celsius(h.temperature_max_K);
    heaters.rows.push_back({p.heaters[k], rounded("%.0f W", p.heater_power_W[k]), temperature});
  }
  s.tables = {heaters, points_table(p)};
  for (const ComfortVerdict& v : p.verdicts) {
    if (!v.assessed) {  // e.g. "not assessed: the model has one well-mixed ..."
      std::string why = v.detail.rfind(kNotAssessed, 0) == 0
                            ? v.detail.substr(std::string(kNotAssessed).size())
                            : v.detail;
      if (!why.empty())
        why[0] = static_cast<char>(std::toupper(static_cast<unsigned char>(why[0])));
      s.paragraphs.push_back("Not assessed: " + v.what + ". " + why + ". The limit: " + v.source +
                             ".");
      continue;
    }
    s.verdicts.push_back({name + ": " + v.what, v.pass, v.detail, v.source});
  }
  const char* captions[] = {"Operative temperature over the occupied zone",
                            "Mean radiant temperature over the occupied zone",
                            "Radiant temperature asymmetry over the occupied zone"};
  for (std::size_t k = 0; k < maps.size() && k < 3; ++k)
    s.figures.push_back({std::string(captions[k]) + ", " + name + " at " +
                             rounded("%.0f W", p.power_W) + " (same colour range for every layout)",
                         maps[k]});
  return s;
}

std::vector<std::string> assumptions(const std::vector<SizedLayout>& layouts) {
  std::vector<std::string> a = {
      "Steady state at one design condition; surfaces gray, diffuse and opaque; view factors "
      "and angle factors by Monte Carlo ray tracing (standard errors in the tool's output).",
      layouts.front().plan.split == PowerSplit::least
          ? "The split of the power between the panels is sought too: the least total power "
            "that meets the target while holding the radiant asymmetry limits, the floor's "
            "29 C and the PMV band's top, found by linear programs on the response to each "
            "panel's power (a local optimum of a nearly linear problem). When no split holds "
            "the limits, the scene's proportions are kept and the verdicts say what fails."
          : "The heaters' powers are scaled together: each panel keeps its share of the "
            "layout's total. The least total power is the smallest that meets the target; "
            "other splits between panels are not searched.",
      "M" + std::string(kSizeMethod).substr(1) + ".",
      "Limits and curves of ISO 7730:2005 and ASHRAE 55 as recalled from memory; check them "
      "against the printed standards before relying on them."};
  const SizedLayout& first = layouts.front();
  if (first.plan.room_air) {
    const RoomAirInput& in = *first.scene.file.room_air;
    a.push_back(
        "Room air: one well-mixed temperature solved from its heat balance (convection "
        "from every surface, outside air at " +
        celsius(in.outside_K) + ", " + rounded("%.3g", first.plan.room_air->flow_m3_s * 3600) +
        " m\u00b3/h, gains " + rounded("%.0f W", in.gains_W) + ", air density " +
        rounded("%.3g kg/m\u00b3", in.density) + ", heat capacity " +
        rounded("%.4g J/(kg K)", in.heat_capacity) + ").");
  }
  if (const auto& person = first.scene.file.comfort->person)
    a.push_back("PMV and PPD (ISO 7730, Fanger) for " + rounded("%.2g met", person->met) + ", " +
                rounded("%.2g clo", person->clo) + ", relative humidity " +
                rounded("%.0f %%", 100 * person->relative_humidity) + ", air speed " +
                rounded("%.2g m/s", first.scene.file.comfort->air_speed) + ".");
  return a;
}

}  // namespace

std::vector<std::size_t> rank_by_power(const std::vector<SizedLayout>& layouts) {
  std::vector<std::size_t> order(layouts.size());
  std::iota(order.begin(), order.end(), std::size_t(0));
  std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
    const HeatingPlan &pa = layouts[a].plan, &pb = layouts[b].plan;
    if (pa.reached != pb.reached) return pa.reached;
    return pa.power_W < pb.power_W;
  });
  return order;
}

std::string state_line(const SizedLayout& l) {
  const ComfortSummary s = summarise_comfort(l.plan.points);
  return air_text(l) + "; heaters up to " + celsius(heater_max_K(l.plan)) + "; operative " +
         celsius(s.operative_K.min) + " to " + celsius(s.operative_K.max) + " (mean " +
         celsius(s.operative_K.mean) + ")";
}

std::vector<std::string> size_cautions(const std::vector<SizedLayout>& layouts,
                                       const std::vector<std::string>& names) {
  std::vector<std::string> out;
  std::vector<Caution> general;
  for (std::size_t k = 0; k < layouts.size(); ++k)
    for (const Caution& c : layouts[k].cautions) {
      if (!c.general())
        out.push_back(names[k] + ": " + c.text);
      else if (std::none_of(general.begin(), general.end(),
                            [&](const Caution& g) { return g.kind == c.kind; }))
        general.push_back(c);
    }
  out.push_back(kPanelCaution);
  for (const Caution& c : general) out.push_back(c.text);
  return out;
}

std::vector<std::string> write_size_outputs(const fs::path& dir, const HeatingTarget& target,
                                            const std::vector<SizedLayout>& layouts,
                                            const std::vector<std::string>& names) {
  std::vector<std::string> files;
  const auto maps = write_maps(dir, layouts, names, &files);
  {
    std::ofstream csv = open_output(dir / "sizing.csv");
    csv << "layout,reached,power_W,scene_power_W,target_value,air_C,solves,split,"
           "proportional_power_W,limits_met\n";
    for (std::size_t k = 0; k < layouts.size(); ++k) {
      const HeatingPlan& p = layouts[k].plan;
      const double air = p.room_air ? p.room_air->air_K : layouts[k].scene.file.comfort->air_K;
      csv << names[k] << "," << (p.reached ? "yes" : "no") << "," << shortest(p.power_W) << ","
          << shortest(p.scene_power_W) << ","
          << shortest(target.kind == TargetKind::pmv_band ? p.value : p.value - kZeroCelsius) << ","
          << shortest(air - kZeroCelsius) << "," << p.solves << "," << to_string(p.split) << ","
          << shortest(p.proportional_power_W) << "," << (p.limits_met ? "yes" : "no") << "\n";
    }
  }
  files.push_back("sizing.csv");
  ClientReport report;
  // Names in the title for one layout; for more, a count (names such as "plan-a" would break
  // at their hyphens in a long heading) and the names in the subtitle.
  report.title =
      "Radiant heating plan: " +
      (names.size() == 1 ? names[0] : std::to_string(names.size()) + " layouts compared");
  report.subtitle = (names.size() == 1 ? "" : "Layouts " + join_and(names) + ". ") +
                    "Target: " + describe(target) + ".";
  ReportSection summary;
  summary.heading = "Power needed per layout";
  summary.paragraphs.push_back(
      "For each layout, the least total heater power that meets the target, and the comfort "
      "verdicts at that power, in the order given; the last column ranks them by the power they "
      "need (a layout that misses the target is not ranked). The least power is not the whole "
      "answer: weigh it against the verdicts not met.");
  summary.tables.push_back(summary_table(layouts, names));
  report.sections.push_back(summary);
  for (std::size_t k = 0; k < layouts.size(); ++k) {
    const SizedLayout& l = layouts[k];
    ComfortReportInput room;  // the room and its surfaces at the plan's power
    room.name = names[k];
    room.scene_path = fs::path(l.scene.file.path).filename().string();
    room.scene = &l.scene.run.scene;
    room.comfort = &*l.scene.file.comfort;
    room.seed = l.scene.run.seed;
    room.surfaces = l.plan.surfaces;
    room.heaters = summarise_heaters(l.scene.model, l.plan.surfaces);
    report.sections.push_back(comfort_room_section(room));
    const auto it = maps.find(names[k]);
    report.sections.push_back(layout_section(
        names[k], layouts[k], it == maps.end() ? std::vector<fs::path>{} : it->second));
  }
  report.assumptions = assumptions(layouts);
  report.cautions = size_cautions(layouts, names);
  write_client_report(report, dir / "report.html");
  files.push_back("report.html");
  return files;
}

}  // namespace hearthray::cli
