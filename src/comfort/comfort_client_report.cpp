// The client report of comfort runs (hearthray/comfort_client_report.hpp).
#include "hearthray/comfort_client_report.hpp"

#include <algorithm>

#include "core/text.hpp"
#include "hearthray/units.hpp"

namespace hearthray {
namespace {

constexpr const char* kLimitsSource = "ISO 7730:2005 Table A.4; ASHRAE 55 (recalled)";
constexpr const char* kLimitsLong =
    "ISO 7730:2005, Table A.4, and ANSI/ASHRAE 55, local discomfort by radiant asymmetry: the "
    "limits for about 5 % dissatisfied, recalled from memory";

// A rounded number for people: a true minus sign, and no "-0".
std::string number(const char* spec, double v) {
  std::string text = rounded(spec, v);
  if (text.find_first_not_of("-0.") == std::string::npos && text[0] == '-') text.erase(0, 1);
  if (!text.empty() && text[0] == '-') text.replace(0, 1, "\u2212");
  return text;
}
std::string celsius(double kelvin) {
  return number("%.1f", kelvin - kZeroCelsius);
}
std::string degrees(double kelvin) {
  return celsius(kelvin) + " \u00b0C";
}

std::string asymmetry_text(const char* which, const Asymmetry& a) {
  return std::string(which) + " " + rounded("%.1f K", a.delta_K) + " (" + to_string(a.kind) +
         ", limit " + rounded("%.0f K", a.limit_K) + ")";
}

bool any_grid(const ComfortReportInput& run) {
  return std::any_of(run.points.begin(), run.points.end(),
                     [](const PointComfort& p) { return p.point.grid_i >= 0; });
}

std::vector<PointComfort> grid_points(const ComfortReportInput& run) {
  std::vector<PointComfort> out;
  for (const PointComfort& p : run.points)
    if (p.point.grid_i >= 0) out.push_back(p);
  return out;
}

ReportTable named_points_table(const ComfortReportInput& run) {
  ReportTable t;
  t.caption = "Comfort at the named points of " + run.name +
              " (temperatures in \u00b0C, asymmetry in K, its case and limit in the checks "
              "above; \u00b1 one standard error of the rays)";
  t.header = {"point",        "body",           "mean radiant",
              "operative",    "vertical asym.", "horizontal asym.",
              "within limits"};
  for (const PointComfort& p : run.points) {
    if (p.point.grid_i >= 0) continue;
    t.rows.push_back(
        {p.point.name, to_string(p.point.body),
         celsius(p.mean_radiant.kelvin) + " \u00b1 " + rounded("%.1g", p.mean_radiant.se_K),
         celsius(p.operative_K), rounded("%.1f", p.vertical.delta_K),
         rounded("%.1f", p.horizontal.delta_K), p.within_limits() ? "yes" : "no"});
  }
  return t;
}

ReportTable grid_table(const ComfortReportInput& run, const ComfortSummary& s) {
  ReportTable t;
  const double height = run.comfort->grid ? run.comfort->grid->height : 0;
  t.caption = "Over the occupied zone of " + run.name + ": " + std::to_string(s.points) +
              " points on a grid at " + rounded("%.2g m", height) + " above the floor";
  t.header = {"figure", "lowest", "mean", "highest"};
  auto row = [&](const char* what, const Range& r, bool temperature) {
    auto text = [&](double v) { return temperature ? celsius(v) : rounded("%.1f", v); };
    t.rows.push_back({what, text(r.min), text(r.mean), text(r.max)});
  };
  row("mean radiant temperature (\u00b0C)", s.mean_radiant_K, true);
  row("operative temperature (\u00b0C)", s.operative_K, true);
  row("vertical radiant asymmetry (K)", s.vertical_K, false);
  row("horizontal radiant asymmetry (K)", s.horizontal_K, false);
  return t;
}

std::vector<ReportVerdict> point_verdicts(const ComfortReportInput& run) {
  std::vector<ReportVerdict> out;
  for (const PointComfort& p : run.points) {
    if (p.point.grid_i >= 0) continue;
    out.push_back({"Radiant asymmetry at " + p.point.name + " (" + to_string(p.point.body) + ")",
                   p.within_limits(),
                   asymmetry_text("vertical", p.vertical) + "; " +
                       asymmetry_text("horizontal", p.horizontal) + "; operative temperature " +
                       degrees(p.operative_K),
                   kLimitsSource});
  }
  const std::vector<PointComfort> grid = grid_points(run);
  if (!grid.empty()) {
    const ComfortSummary s = summarise_comfort(grid);
    std::vector<std::string> over;
    for (const PointComfort* p : s.failing) over.push_back(failing_text(*p));
    out.push_back({"Radiant asymmetry over the occupied zone", s.count_both == s.points,
                   share_text(s.count_both, s.points) + " grid points within both limits" +
                       (over.empty() ? "" : "; over a limit: " + join_at_most(over, 3)),
                   kLimitsSource});
  }
  std::vector<std::string> hot;
  for (const Caution& c : run.cautions)
    if (c.kind == CautionKind::hot_in_reach) hot.push_back(c.text);
  out.push_back({"Hot surfaces out of reach", hot.empty(),
                 hot.empty() ? "no surface above 43 \u00b0C comes lower than 2 m above the floor"
                             : join(hot, " "),
                 "EN ISO 13732-1 contact thresholds, about 43 \u00b0C for long contact "
                 "(recalled); reach of 2 m is common practice, no published source"});
  return out;
}

}  // namespace

ReportSection comfort_room_section(const ComfortReportInput& run) {
  ReportSection s;
  s.heading = "The room: " + run.name;
  const Vec3 e = run.scene->bounds.extent();
  s.paragraphs.push_back("Scene file " + run.scene_path + ": a model " + rounded("%.2f", e.x) +
                         " \u00d7 " + rounded("%.2f", e.y) + " \u00d7 " + rounded("%.2f m", e.z) +
                         " (length \u00d7 width \u00d7 height of its bounding box) with " +
                         std::to_string(run.surfaces.size()) + " surfaces.");
  if (run.heaters.count)
    s.paragraphs.push_back(std::to_string(run.heaters.count) + " heated surface" +
                           (run.heaters.count == 1 ? "" : "s") + " put in " +
                           rounded("%.0f W", run.heaters.power_W) +
                           " in total; the hottest part of any of them reaches " +
                           degrees(run.heaters.surface_max_K) + ".");
  ReportTable t;
  t.caption = "Surfaces of " + run.name + " after the solve";
  t.header = {"surface", "area (m\u00b2)", "emissivity", "temperature (\u00b0C)",
              "heat put in (W)"};
  for (const SurfaceHeat& h : run.surfaces) {
    // The mean, and the range over the surface's pieces where they differ.
    std::string temperature = celsius(h.temperature_K);
    if (celsius(h.temperature_min_K) != celsius(h.temperature_max_K))
      temperature +=
          " (" + celsius(h.temperature_min_K) + " to " + celsius(h.temperature_max_K) + ")";
    t.rows.push_back({h.name, rounded("%.2f", h.area_m2), rounded("%.2f", h.emissivity),
                      temperature, number("%.0f", h.heat_input_W)});
  }
  s.tables.push_back(t);
  return s;
}

ReportSection comfort_points_section(const ComfortReportInput& run) {
  ReportSection s;
  s.heading = "Comfort: " + run.name;
  const ComfortInput& in = *run.comfort;
  s.paragraphs.push_back(
      "Air at " + degrees(in.air_K) + ", moving at " + rounded("%.2g m/s", in.air_speed) +
      ". The mean radiant temperature is what the surfaces send a person; the operative "
      "temperature combines it with the air. Radiant asymmetry is the difference between the "
      "radiant temperatures of opposite sides (ceiling against floor, wall against wall); a "
      "warm ceiling is the case people tolerate least. Limits: " +
      std::string(kLimitsLong) + ".");
  s.verdicts = point_verdicts(run);
  if (std::any_of(run.points.begin(), run.points.end(),
                  [](const PointComfort& p) { return p.point.grid_i < 0; }))
    s.tables.push_back(named_points_table(run));
  if (any_grid(run)) s.tables.push_back(grid_table(run, summarise_comfort(grid_points(run))));
  s.figures = run.maps;
  return s;
}

std::vector<std::string> comfort_report_assumptions(const ComfortReportInput& run) {
  const ComfortInput& in = *run.comfort;
  return {
      "Steady state: the heaters run at the powers given until every surface has settled.",
      "Surfaces are opaque, gray and diffuse, with the emissivities in the surface table; the "
      "room air does not absorb or emit radiation.",
      "The air is at " + degrees(in.air_K) + " everywhere, moving at " +
          rounded("%.2g m/s", in.air_speed) + "; the operative temperature weighs the air by " +
          rounded("%.1f", operative_air_weight(in.air_speed)) +
          " and the mean radiant temperature by the rest (ISO 7726 / ASHRAE 55 simple form; "
          "recalled).",
      "Heat through walls, windows and floor follows the U-values and outside temperatures of "
      "the scene file; heat convected into the room air stands for what ventilation carries off.",
      "View factors and angle factors by Monte Carlo ray tracing: " + std::to_string(in.rays) +
          " rays per point for the body and for each of six plane elements, seed " +
          std::to_string(run.seed) + "; the \u00b1 figures are one standard error.",
      "Seated and standing persons are weighted by projected area after Fanger; those factors, "
      "the asymmetry limits and the dissatisfaction curves are values recalled from memory: "
      "check them against the printed standards before relying on them.",
  };
}

std::vector<std::string> comfort_report_cautions(
    const std::vector<const ComfortReportInput*>& runs) {
  std::vector<std::string> out;
  std::vector<CautionKind> general;
  std::vector<std::string> general_text;
  double hottest_K = 0;
  for (const ComfortReportInput* run : runs) {
    hottest_K = std::max(hottest_K, run->heaters.surface_max_K);
    for (const Caution& c : run->cautions) {
      if (!c.general()) {
        out.push_back((runs.size() > 1 ? run->name + ": " : "") + c.text);
      } else if (c.kind != CautionKind::clearances &&  // said below, with fire
                 std::find(general.begin(), general.end(), c.kind) == general.end()) {
        general.push_back(c.kind);
        general_text.push_back(c.text);
      }
    }
  }
  if (hottest_K > 0)
    out.push_back(
        "Hot surfaces and burns: the heated surfaces reach " + degrees(hottest_K) +
        " here. Touching them can burn, above all young children, older people and "
        "anyone who cannot move away quickly; never cover a heater or dry clothes on it.");
  out.push_back(
      "Fire: keep the clearances the heater maker gives from curtains, furniture, shelves, "
      "bedding, glass and anything else that burns or cracks.");
  out.push_back(
      "Heaters that burn fuel (stoves, gas or oil heaters) bring carbon monoxide and "
      "flue gas, which this model does not cover: they need a flue, combustion air and "
      "a carbon monoxide alarm as local codes require.");
  out.insert(out.end(), general_text.begin(), general_text.end());
  out.push_back(
      "Install and connect heaters as the maker's instructions say, by a licensed "
      "installer, to the local building, electrical and fire codes; this report is an "
      "engineering estimate for planning, not a design approval.");
  return out;
}

ClientReport comfort_client_report(const ComfortReportInput& run) {
  ClientReport r;
  r.title = "Radiant comfort estimate: " + run.name;
  r.subtitle =
      "Mean radiant and operative temperatures and radiant asymmetry where people sit "
      "and stand, from the scene " +
      run.scene_path;
  r.sections = {comfort_room_section(run), comfort_points_section(run)};
  r.assumptions = comfort_report_assumptions(run);
  r.cautions = comfort_report_cautions({&run});
  return r;
}

ClientReport compare_client_report(const std::vector<ComfortReportInput>& runs,
                                   const ReportTable& side_by_side) {
  ClientReport r;
  std::vector<std::string> names;
  std::vector<const ComfortReportInput*> pointers;
  for (const ComfortReportInput& run : runs) {
    names.push_back(run.name);
    pointers.push_back(&run);
  }
  // Two names read as "a against b"; past two, the title counts them and the subtitle names
  // them ("a against b against c" does not read as a comparison of three).
  r.title =
      "Radiant comfort: " + (names.size() < 3 ? join(names, " against ")
                                              : std::to_string(names.size()) + " layouts compared");
  r.subtitle = (names.size() < 3 ? std::string("Layouts") : "Layouts " + join_and(names)) +
               " compared side by side, each solved and traced alike; maps of one quantity "
               "share one colour range, so equal colours mean equal values.";
  ReportSection summary;
  summary.heading = "Side by side";
  summary.paragraphs.push_back(
      "Each column is one scene. Asymmetry limits (about 5 % dissatisfied): warm ceiling 5 K, "
      "cool wall 10 K, cool ceiling 14 K, warm wall 23 K (" +
      std::string(kLimitsLong) + ").");
  summary.tables.push_back(side_by_side);
  r.sections.push_back(summary);
  for (const ComfortReportInput& run : runs) {
    r.sections.push_back(comfort_room_section(run));
    ReportSection points = comfort_points_section(run);
    // The list at a glance gathers every scene's verdicts: each names its scene.
    for (ReportVerdict& v : points.verdicts) v.what = run.name + ": " + v.what;
    r.sections.push_back(std::move(points));
  }
  r.assumptions = comfort_report_assumptions(runs.front());
  if (runs.size() > 1)
    r.assumptions.push_back("Air, rays and seed as above for " + runs.front().name +
                            "; the other scenes as their own files give them (see each "
                            "comfort section).");
  r.cautions = comfort_report_cautions(pointers);
  return r;
}

}  // namespace hearthray
