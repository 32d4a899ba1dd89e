// Outputs of a firing (see firing_report.hpp).
#include "hearthray/firing_report.hpp"

#include <cmath>
#include <nlohmann/json.hpp>
#include <ostream>

#include "core/text.hpp"
#include "hearthray/io.hpp"
#include "hearthray/outer_case.hpp"
#include "hearthray/render.hpp"
#include "hearthray/thermal_report.hpp"
#include "hearthray/units.hpp"
#include "pictures/canvas.hpp"
#include "pictures/line_chart.hpp"

namespace hearthray {
namespace {

double celsius(double K) {
  return K - kZeroCelsius;
}
std::string hours(double s) {
  return rounded("%.2f h", s / 3600);
}
std::string kwh(double J) {
  return std::fabs(J) < 1 ? "0 kWh" : rounded("%.3g kWh", J / 3.6e6);
}

constexpr Colour kControl{0.70, 0.13, 0.10};  // the control point and the power: one strong red
constexpr Colour kGuide{0.25, 0.25, 0.25};    // set point and installed power, dashed

// "schedule completed", and the segments that lagged beyond the limit.
std::string outcome(const FiringResult& r) {
  if (!r.completed) return "NOT completed: " + r.message;
  int lagging = 0;
  double worst = 0;
  for (const SegmentReport& s : r.segments)
    if (!s.followed) ++lagging, worst = std::max(worst, s.max_lag_K);
  if (lagging == 0) return "schedule completed and followed";
  return "schedule completed; " + std::to_string(lagging) + " segment(s) not followed (lag up to " +
         rounded("%.0f K", worst) + ")";
}

std::string describe(const ScheduleSegment& g) {
  switch (g.kind) {
    case ScheduleSegment::Kind::ramp:
      return "ramp " + rounded("%.4g K/h", g.rate * 3600) + " to " +
             rounded("%.0f C", celsius(g.target));
    case ScheduleSegment::Kind::hold:
      return "hold " + rounded("%.4g min", g.duration / 60);
    case ScheduleSegment::Kind::cool:
      return "cool naturally to " + rounded("%.0f C", celsius(g.target));
  }
  return "";
}

void print_segments(std::ostream& out, const FiringResult& r, const FiringInput& in) {
  out << "segment                            start       end   control at end   largest lag\n";
  for (const SegmentReport& s : r.segments) {
    std::string line = std::to_string(s.segment + 1) + "  " + describe(in.schedule[s.segment]);
    line.resize(std::max<std::size_t>(line.size() + 1, 33), ' ');
    out << line << " " << hours(s.start_s) << "  " << hours(s.end_s) << "   "
        << rounded("%8.1f C", celsius(s.control_end_K)) << "   "
        << (in.schedule[s.segment].kind == ScheduleSegment::Kind::cool
                ? std::string("-")
                : rounded("%.1f K", s.max_lag_K) + (s.followed ? "" : "  NOT FOLLOWED"))
        << "\n";
  }
}

void print_targets(std::ostream& out, const FiringResult& r, const FiringInput& in) {
  for (std::size_t g = 0; g < in.schedule.size(); ++g) {
    if (in.schedule[g].kind != ScheduleSegment::Kind::ramp) continue;
    const std::string target = rounded("%.0f C", celsius(in.schedule[g].target));
    out << target << ": control point '" << in.control << "' "
        << (r.control_reached_s[g] >= 0 ? "at " + hours(r.control_reached_s[g]) : "never");
    for (std::size_t l = 0; l < r.load_names.size(); ++l)
      out << ", load '" << r.load_names[l] << "' "
          << (r.load_reached_s[l][g] >= 0
                  ? "at " + hours(r.load_reached_s[l][g])
                  : "never (highest " + rounded("%.1f C", celsius(r.load_peak_K[l])) + ")");
    out << "\n";
  }
}

// Per wall: its outer face's highest temperature over the firing and, where it burns on touch
// or contact, the ISO 13732-1 threshold (outer_case.hpp).
std::vector<std::string> outer_face_lines(const FiringResult& r) {
  std::vector<std::string> lines;
  for (std::size_t w = 0; w < r.wall_names.size(); ++w) {
    double hottest = 0, when = 0;
    for (const FiringSample& x : r.samples)
      if (x.case_K[w] > hottest) hottest = x.case_K[w], when = x.time_s;
    const double C = celsius(hottest);
    const TouchHazard hazard = C >= kBurnOnTouchC     ? TouchHazard::touch
                               : C >= kBurnOnContactC ? TouchHazard::contact
                                                      : TouchHazard::none;
    std::string line = std::string(hazard == TouchHazard::none ? "" : "warning: ") +
                       "outer face of '" + r.wall_names[w] + "': up to " + rounded("%.0f C", C) +
                       " at " + hours(when);
    if (hazard != TouchHazard::none) line += ": " + hazard_text(hazard);
    lines.push_back(line);
  }
  return lines;
}

}  // namespace

void print_firing_summary(std::ostream& out, const FiringResult& r, const FiringInput& in) {
  const double end = r.samples.empty() ? 0 : r.samples.back().time_s;
  out << "firing: " << outcome(r) << " after " << hours(end) << " (" << r.steps << " time steps, "
      << r.rejected_steps << " repeated with a smaller step)\n\n";
  print_segments(out, r, in);
  out << "\ntargets reached (surface mean temperatures):\n";
  print_targets(out, r, in);
  out << "\nenergy: put in " << kwh(r.energy_in_J) << "; stored in the loads "
      << kwh(r.stored_loads_J) << ", in the walls " << kwh(r.stored_walls_J)
      << "; lost through the wall cases " << kwh(r.case_loss_J) << ", otherwise "
      << kwh(r.other_loss_J) << " (openings, steady wall losses, held surfaces); residual "
      << rounded("%.2g", r.energy_in_J > 0 ? r.residual_J / r.energy_in_J : 0.0)
      << " of the energy put in\n";
  for (const std::string& line : outer_face_lines(r)) out << line << "\n";
  for (const std::string& n : r.notes) out << "note: " << n << "\n";
  for (const std::string& w : r.warnings) out << "warning: " << w << "\n";
  out << "caution: " << kFiringCaution << "\n";
}

void write_firing_csv(std::ostream& out, const FiringResult& r) {
  out << "time_s,time_h,segment,set_point_C,control_C,power_W";
  for (const std::string& n : r.surface_names) out << ',' << csv_field(n + "_C");
  for (const std::string& n : r.wall_names) out << ',' << csv_field(n + "_outer_face_C");
  for (const std::string& n : r.load_names) out << ',' << csv_field(n + "_inside_C");
  out << '\n';
  for (const FiringSample& x : r.samples) {
    out << shortest(x.time_s) << ',' << shortest(x.time_s / 3600) << ',' << x.segment + 1 << ','
        << (std::isnan(x.set_point_K) ? "" : shortest(celsius(x.set_point_K))) << ','
        << shortest(celsius(x.control_K)) << ',' << shortest(x.power_W);
    for (double T : x.surface_K) out << ',' << shortest(celsius(T));
    for (double T : x.case_K) out << ',' << shortest(celsius(T));
    for (double T : x.load_inner_K) out << ',' << shortest(celsius(T));
    out << '\n';
  }
}

std::string firing_report_json(const FiringResult& r, const FiringInput& in) {
  using nlohmann::json;
  json j;
  j["completed"] = r.completed;
  j["message"] = r.message;
  j["control"] = in.control;
  json segments = json::array();
  for (const SegmentReport& s : r.segments)
    segments.push_back({{"segment", s.segment + 1},
                        {"what", describe(in.schedule[s.segment])},
                        {"start_s", s.start_s},
                        {"end_s", s.end_s},
                        {"control_end_K", s.control_end_K},
                        {"max_lag_K", s.max_lag_K},
                        {"followed", s.followed}});
  j["segments"] = segments;
  j["control_reached_s"] = r.control_reached_s;
  json loads = json::object();
  for (std::size_t l = 0; l < r.load_names.size(); ++l)
    loads[r.load_names[l]] = r.load_reached_s[l];
  j["loads_reached_s"] = loads;
  j["loads_peak_K"] = r.load_peak_K;
  j["energy_J"] = {{"put_in", r.energy_in_J},
                   {"stored_in_loads", r.stored_loads_J},
                   {"stored_in_walls", r.stored_walls_J},
                   {"lost_through_cases", r.case_loss_J},
                   {"lost_otherwise", r.other_loss_J},
                   {"residual", r.residual_J}};
  j["steps"] = r.steps;
  j["rejected_steps"] = r.rejected_steps;
  j["outer_faces"] = outer_face_lines(r);
  j["notes"] = r.notes;
  j["warnings"] = r.warnings;
  j["cautions"] = {kEngineeringCaution, kFiringCaution};
  return j.dump(2);
}

Picture firing_temperature_picture(const FiringResult& r, const std::string& title) {
  pictures::LineChart chart;
  chart.title = title;
  chart.subtitle = pictures::sentence_case(outcome(r));
  chart.x_label = "time in h";
  chart.y_label = "temperature in °C";
  pictures::ChartSeries set{"set point", {}, {}, kGuide, true};
  pictures::ChartSeries control{"control point", {}, {}, kControl, false};
  std::vector<pictures::ChartSeries> loads, walls;
  for (std::size_t l = 0; l < r.load_names.size(); ++l)
    loads.push_back({"load " + r.load_names[l] + " (inside)", {}, {}, category_colour(1 + l)});
  for (std::size_t w = 0; w < r.wall_names.size(); ++w)
    walls.push_back(
        {r.wall_names[w] + " outer face", {}, {}, category_colour(1 + loads.size() + w)});
  for (const FiringSample& x : r.samples) {
    const double h = x.time_s / 3600;
    set.x.push_back(h), set.y.push_back(celsius(x.set_point_K));
    control.x.push_back(h), control.y.push_back(celsius(x.control_K));
    for (std::size_t l = 0; l < loads.size(); ++l)
      loads[l].x.push_back(h), loads[l].y.push_back(celsius(x.load_inner_K[l]));
    for (std::size_t w = 0; w < walls.size(); ++w)
      walls[w].x.push_back(h), walls[w].y.push_back(celsius(x.case_K[w]));
  }
  chart.series = {set, control};
  chart.series.insert(chart.series.end(), loads.begin(), loads.end());
  chart.series.insert(chart.series.end(), walls.begin(), walls.end());
  return pictures::draw_line_chart(chart);
}

Picture firing_power_picture(const FiringResult& r, const FiringInput& in,
                             const std::string& title) {
  pictures::LineChart chart;
  chart.title = title;
  chart.subtitle = "Controller: PI, proportional band " + rounded("%.3g K", in.band_K) +
                   ", integral time " + rounded("%.3g min", in.integral_s / 60);
  chart.x_label = "time in h";
  chart.y_label = "heating power in kW";
  chart.y_from_zero = true;
  pictures::ChartSeries power{"heating power", {}, {}, kControl, false};
  pictures::ChartSeries installed{"installed power", {}, {}, kGuide, true};
  for (const FiringSample& x : r.samples)
    power.x.push_back(x.time_s / 3600), power.y.push_back(x.power_W / 1e3);
  if (!r.samples.empty()) {
    installed.x = {0, r.samples.back().time_s / 3600};
    installed.y = {r.installed_W / 1e3, r.installed_W / 1e3};
  }
  chart.series = {power, installed};
  return pictures::draw_line_chart(chart);
}

}  // namespace hearthray
