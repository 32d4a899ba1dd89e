// Comfort outputs: table, summary, CSV, cautions and heater summary (see comfort_report.hpp).
#include "hearthray/comfort_report.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <ostream>

#include "core/text.hpp"
#include "hearthray/units.hpp"

namespace hearthray {
namespace {

// A person can reach a surface whose lowest point is below this height above the floor
// (common practice for an arm's reach; no published source).
constexpr double kReachHeight_m = 2.0;
// Surfaces above about 43 C can burn skin on long contact (EN ISO 13732-1 gives thresholds for
// contact of minutes to hours around 43-51 C; recalled from memory).
constexpr double kTouchLimit_C = 43;
// A surface counts as hot for the glass warning above this temperature, and glass within this
// distance of it (gap between their bounding boxes) is named. Our own round numbers.
constexpr double kHot_C = 40;
constexpr double kNearGlass_m = 0.6;

std::string name_pad(const std::string& s, std::size_t w) {
  return s.size() >= w ? s + " " : s + std::string(w - s.size(), ' ');
}

std::string celsius(double K) {
  return rounded("%.1f", K - kZeroCelsius);
}

Range range(const std::vector<PointComfort>& points, double (*get)(const PointComfort&)) {
  Range r{INFINITY, 0, -INFINITY};
  for (const PointComfort& p : points) {
    const double v = get(p);
    r.min = std::min(r.min, v);
    r.max = std::max(r.max, v);
    r.mean += v / double(points.size());
  }
  return r;
}

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(),
                 [](unsigned char c) { return char(std::tolower(c)); });
  return s;
}

Box3 surface_box(const Scene& scene, std::uint32_t s) {
  Box3 b;
  const Surface& surf = scene.surfaces[s];
  for (std::uint32_t t = surf.first_triangle; t < surf.first_triangle + surf.triangle_count; ++t) {
    for (std::uint32_t v : scene.triangles[t].v) b.grow(scene.vertices[v]);
  }
  return b;
}

double box_gap(const Box3& a, const Box3& b) {
  const Vec3 d{std::max({0.0, a.lo.x - b.hi.x, b.lo.x - a.hi.x}),
               std::max({0.0, a.lo.y - b.hi.y, b.lo.y - a.hi.y}),
               std::max({0.0, a.lo.z - b.hi.z, b.lo.z - a.hi.z})};
  return norm(d);
}

bool has_pmv(const std::vector<PointComfort>& points) {
  return std::any_of(points.begin(), points.end(), [](const PointComfort& p) { return p.pmv; });
}

// PMV and PPD over the points, and the points whose conditions leave the standard's ranges.
void print_pmv_summary(std::ostream& out, const std::vector<PointComfort>& points) {
  if (!has_pmv(points)) return;
  const Range pmv = range(points, [](const PointComfort& p) { return p.pmv ? p.pmv->pmv : 0.0; });
  const Range ppd = range(points, [](const PointComfort& p) { return p.pmv ? p.pmv->ppd : 0.0; });
  out << "  " << name_pad("PMV", 34) << rounded("%7.2f", pmv.min) << rounded("%7.2f", pmv.mean)
      << rounded("%7.2f", pmv.max) << "\n";
  out << "  " << name_pad("PPD (%)", 34) << rounded("%7.1f", ppd.min) << rounded("%7.1f", ppd.mean)
      << rounded("%7.1f", ppd.max) << "\n";
  std::vector<std::string> outside;
  for (const PointComfort& p : points)
    if (p.pmv && !p.pmv->in_range())
      outside.push_back(p.point.name + " (" + join(p.pmv->out_of_range, ", ") + ")");
  if (!outside.empty())
    out << "  PMV outside the ranges of ISO 7730 sec. 4.1 at "
        << share_text(outside.size(), points.size())
        << " points, an extrapolation there: " << join_at_most(outside, 5) << "\n";
}

std::string verdict(const PointComfort& p) {
  if (p.within_limits()) return "within limits";
  std::string v;
  if (!p.vertical.within())
    v += to_string(p.vertical.kind) + " over " + rounded("%.0f K", p.vertical.limit_K);
  if (!p.horizontal.within()) {
    v += (v.empty() ? "" : "; ") + to_string(p.horizontal.kind) + " over " +
         rounded("%.0f K", p.horizontal.limit_K);
  }
  return v;
}

}  // namespace

ComfortSummary summarise_comfort(const std::vector<PointComfort>& points) {
  ComfortSummary s;
  s.points = points.size();
  if (points.empty()) return s;
  s.mean_radiant_K = range(points, [](const PointComfort& p) { return p.mean_radiant.kelvin; });
  s.operative_K = range(points, [](const PointComfort& p) { return p.operative_K; });
  s.vertical_K = range(points, [](const PointComfort& p) { return p.vertical.delta_K; });
  s.horizontal_K = range(points, [](const PointComfort& p) { return p.horizontal.delta_K; });
  const double n = double(points.size());
  for (const PointComfort& p : points) {
    s.within_vertical += p.vertical.within() / n;
    s.within_horizontal += p.horizontal.within() / n;
    s.within_both += p.within_limits() / n;
    s.count_vertical += p.vertical.within();
    s.count_horizontal += p.horizontal.within();
    s.count_both += p.within_limits();
    if (!p.within_limits()) s.failing.push_back(&p);
    for (const Asymmetry* a : {&p.vertical, &p.horizontal}) {
      const double ratio = a->delta_K / a->limit_K;
      if (!s.worst || ratio > s.worst_ratio) {
        s.worst = &p;
        s.worst_ratio = ratio;
      }
    }
  }
  return s;
}

std::string share_text(std::size_t count, std::size_t of) {
  return std::to_string(count) + " of " + std::to_string(of);
}

std::string failing_text(const PointComfort& p) {
  std::vector<std::string> why;
  for (const auto& [a, axis] : {std::pair{&p.vertical, "vertical"}, {&p.horizontal, "horizontal"}})
    if (!a->within())
      why.push_back(std::string(axis) + " " + rounded("%.2f K", a->delta_K) + ", " +
                    to_string(a->kind) + ", limit " + rounded("%.0f K", a->limit_K));
  return p.point.name + " (" + join(why, "; ") + ")";
}

void print_comfort_table(std::ostream& out, const std::vector<PointComfort>& points,
                         const ComfortSummary& s) {
  using Align = TextTable::Align;
  std::vector<TextTable::Column> columns = {{"point"},
                                            {"kind"},
                                            {"t_mr C", Align::right},
                                            {"+-", Align::right},
                                            {"t_o C", Align::right},
                                            {"vert K", Align::right},
                                            {"case"},
                                            {"PD %", Align::right},
                                            {"horiz K", Align::right},
                                            {"case"},
                                            {"PD %", Align::right},
                                            {"verdict"}};
  const bool pmv = has_pmv(points);
  if (pmv) columns.insert(columns.end(), {{"PMV", Align::right}, {"PPD %", Align::right}, {""}});
  TextTable table(columns);
  for (const PointComfort& p : points) {
    std::vector<std::string> row = {p.point.name,
                                    to_string(p.point.body),
                                    celsius(p.mean_radiant.kelvin),
                                    rounded("%.2f", p.mean_radiant.se_K),
                                    celsius(p.operative_K),
                                    rounded("%.1f", p.vertical.delta_K),
                                    to_string(p.vertical.kind),
                                    rounded("%.1f", p.vertical.pd_percent),
                                    rounded("%.1f", p.horizontal.delta_K),
                                    to_string(p.horizontal.kind),
                                    rounded("%.1f", p.horizontal.pd_percent),
                                    verdict(p)};
    if (p.pmv)
      row.insert(row.end(), {rounded("%+.2f", p.pmv->pmv), rounded("%.1f", p.pmv->ppd),
                             p.pmv->in_range() ? "" : "(outside ISO 7730 ranges)"});
    table.add(std::move(row));
  }
  out << table.text();
  if (points.empty()) return;
  auto line = [&](const char* what, const Range& r, bool temperature) {
    const double shift = temperature ? kZeroCelsius : 0;
    out << "  " << name_pad(what, 34) << rounded("%7.1f", r.min - shift)
        << rounded("%7.1f", r.mean - shift) << rounded("%7.1f", r.max - shift) << "\n";
  };
  out << "\nsummary over " << s.points << " points" << name_pad("", 9) << "    min   mean    max\n";
  line("mean radiant temperature (C)", s.mean_radiant_K, true);
  line("operative temperature (C)", s.operative_K, true);
  line("vertical asymmetry (K)", s.vertical_K, false);
  line("horizontal asymmetry (K)", s.horizontal_K, false);
  print_pmv_summary(out, points);
  out << "  within the vertical limit: " << share_text(s.count_vertical, s.points)
      << " points; horizontal: " << share_text(s.count_horizontal, s.points)
      << "; both: " << share_text(s.count_both, s.points) << "\n";
  if (!s.failing.empty()) {
    std::vector<std::string> names;
    for (const PointComfort* p : s.failing) names.push_back(failing_text(*p));
    out << "  over a limit (" << s.failing.size() << "): " << join_at_most(names, 20)
        << (s.failing.size() > 20 ? " (all in comfort.csv)" : "") << "\n";
  }
  if (s.worst) {
    const PointComfort& p = *s.worst;
    const Asymmetry& a =
        p.vertical.delta_K / p.vertical.limit_K >= p.horizontal.delta_K / p.horizontal.limit_K
            ? p.vertical
            : p.horizontal;
    out << "  worst asymmetry: " << rounded("%.1f K", a.delta_K) << " (" << to_string(a.kind)
        << ", limit " << rounded("%.0f K", a.limit_K) << ", PD " << rounded("%.1f %%", a.pd_percent)
        << ") at " << p.point.name << "\n";
  }
  out << "limits (PD about 5 %): warm ceiling 5 K, cool wall 10 K, cool ceiling 14 K, warm wall "
         "23 K -- ISO 7730 Table A.4 (categories A, B) and ASHRAE 55; PD from the ISO 7730 "
         "curves (sec. 6.3). Values recalled from memory; check them against the standards.\n"
         "t_o = A t_a + (1 - A) t_mr, A = 0.5 / 0.6 / 0.7 for air below 0.2 / 0.6 / 1.0 m/s "
         "(ISO 7726, ASHRAE 55; recalled). +- is one standard error of t_mr from the rays.\n";
}

void write_comfort_csv(std::ostream& out, const std::vector<PointComfort>& points) {
  out << "point,kind,x_m,y_m,z_m,mean_radiant_C,mean_radiant_se_K,operative_C";
  for (const char* d : kPlaneNames) out << ",plane_radiant_" << d << "_C";
  out << ",vertical_asymmetry_K,vertical_se_K,vertical_case,vertical_pd_percent"
         ",horizontal_asymmetry_K,horizontal_se_K,horizontal_axis,horizontal_case,"
         "horizontal_pd_percent,lost_fraction,within_limits";
  const bool pmv = has_pmv(points);
  out << (pmv ? ",pmv,ppd_percent,pmv_within_iso7730_ranges\n" : "\n");
  for (const PointComfort& p : points) {
    out << p.point.name << "," << to_string(p.point.body) << "," << shortest(p.point.position.x)
        << "," << shortest(p.point.position.y) << "," << shortest(p.point.position.z) << ","
        << shortest(p.mean_radiant.kelvin - kZeroCelsius) << "," << shortest(p.mean_radiant.se_K)
        << "," << shortest(p.operative_K - kZeroCelsius);
    for (const RadiantTemperature& t : p.plane) out << "," << shortest(t.kelvin - kZeroCelsius);
    out << "," << shortest(p.vertical.delta_K) << "," << shortest(p.vertical.se_K) << ","
        << to_string(p.vertical.kind) << "," << shortest(p.vertical.pd_percent) << ","
        << shortest(p.horizontal.delta_K) << "," << shortest(p.horizontal.se_K) << ","
        << (p.horizontal.axis == 0 ? "x" : "y") << "," << to_string(p.horizontal.kind) << ","
        << shortest(p.horizontal.pd_percent) << "," << shortest(p.lost_fraction) << ","
        << (p.within_limits() ? "yes" : "no");
    if (pmv && p.pmv)
      out << "," << shortest(p.pmv->pmv) << "," << shortest(p.pmv->ppd) << ","
          << (p.pmv->in_range() ? "yes" : "no");
    else if (pmv)
      out << ",,,";
    out << "\n";
  }
}

std::vector<Caution> comfort_cautions(const Scene& scene,
                                      const std::vector<SurfaceHeat>& surfaces) {
  std::vector<Caution> out;
  const double floor = scene.bounds.lo.z;
  const std::size_t n = std::min(surfaces.size(), scene.surfaces.size());
  auto hot_C = [&](std::size_t s) { return surfaces[s].temperature_max_K - kZeroCelsius; };
  for (std::size_t s = 0; s < n; ++s) {
    const double t_C = hot_C(s), low = surface_box(scene, std::uint32_t(s)).lo.z - floor;
    if (t_C > kTouchLimit_C && low < kReachHeight_m) {
      out.push_back({CautionKind::hot_in_reach,
                     surfaces[s].name + " reaches " + rounded("%.0f C", t_C) +
                         " and comes down to " + rounded("%.1f m", low) +
                         " above the floor, within reach: surfaces above about 43 C can burn on "
                         "longer contact; guard it or place it out of reach, as the maker says."});
    }
  }
  // One caution per glass surface, naming every hot surface near it.
  for (std::size_t g = 0; g < scene.surfaces.size(); ++g) {
    const std::string name = lower(scene.surfaces[g].name);
    if (name.find("window") == std::string::npos && name.find("glass") == std::string::npos &&
        name.find("glaz") == std::string::npos)
      continue;
    const Box3 glass = surface_box(scene, std::uint32_t(g));
    std::vector<std::string> near;
    for (std::size_t s = 0; s < n; ++s) {
      if (s == g || hot_C(s) <= kHot_C) continue;
      const double gap = box_gap(surface_box(scene, std::uint32_t(s)), glass);
      if (gap <= kNearGlass_m) {
        near.push_back(surfaces[s].name + " at " + rounded("%.2f m", gap) + " (" +
                       rounded("%.0f C", hot_C(s)) + ")");
      }
    }
    if (near.empty()) continue;
    std::string list = near[0];
    for (std::size_t k = 1; k < near.size(); ++k)
      list += (k + 1 == near.size() ? " and " : ", ") + near[k];
    out.push_back({CautionKind::glass_near_heat,
                   scene.surfaces[g].name + " (glass) is near heat: " + list +
                       "; uneven heating can crack glass: keep the clearance the panel maker "
                       "gives."});
  }
  out.push_back(
      {CautionKind::clearances,
       "Keep the clearances the heater maker gives from curtains, furniture, glass and anything "
       "that burns; follow local codes and the maker's instructions."});
  out.push_back({CautionKind::estimates, kComfortCaution});
  return out;
}

HeaterSummary summarise_heaters(const ThermalModel& model,
                                const std::vector<SurfaceHeat>& surfaces) {
  HeaterSummary h;
  for (std::size_t s = 0; s < surfaces.size() && s < model.surface_conditions.size(); ++s) {
    const NodeCondition& c = model.surface_conditions[s];
    const bool heated =
        (c.kind == ConditionKind::power || c.kind == ConditionKind::heat_flux) && c.value > 0;
    // A panel the size command's split switched off puts in only the solve's residual (well
    // under a milliwatt): not counted.
    if (!heated || !(surfaces[s].heat_input_W > 1e-3)) continue;
    ++h.count;
    h.power_W += surfaces[s].heat_input_W;
    h.surface_max_K = std::max(h.surface_max_K, surfaces[s].temperature_max_K);
  }
  return h;
}

}  // namespace hearthray
