// Comfort verdicts at a solved state, each with the source of its limit (declared in
// include/hearthray/heating_plan.hpp).
#include <algorithm>
#include <cmath>

#include "core/text.hpp"
#include "hearthray/comfort_report.hpp"
#include "hearthray/heating_plan.hpp"
#include "hearthray/units.hpp"

namespace hearthray {
namespace {

// A floor surface faces up within this (cosine of the normal with +z) and lies within this
// height of the scene's lowest point. Our own round numbers.
constexpr double kUpCosine = 0.9;
constexpr double kFloorBand_m = 0.05;
// The PMV band of category B of ISO 7730:2005 Table A.1 (recalled), used when the target is
// not itself a PMV band.
constexpr double kPmvB = 0.5;

std::string celsius(double K) {
  return rounded("%.1f C", K - kZeroCelsius);
}

ComfortVerdict target_verdict(const std::vector<PointComfort>& points, const HeatingTarget& t) {
  ComfortVerdict v;
  v.what = "target: " + describe(t);
  const double value = target_value(points, t), wanted = target_wanted(t);
  v.pass = value >= wanted - 1e-6;
  v.detail = t.kind == TargetKind::pmv_band
                 ? "lowest PMV " + rounded("%+.2f", value)
                 : (t.kind == TargetKind::operative_zone_mean ? "mean " : "coolest ") +
                       rounded("%.2f C", value - kZeroCelsius);
  v.source = "the planner's target";
  return v;
}

ComfortVerdict asymmetry_verdict(const std::vector<PointComfort>& points) {
  const ComfortSummary s = summarise_comfort(points);
  ComfortVerdict v;
  v.what = "radiant temperature asymmetry";
  v.pass = s.count_both == s.points;
  v.detail = share_text(s.count_both, s.points) + " points within the limits";
  if (!s.failing.empty()) {
    std::vector<std::string> over;
    for (const PointComfort* p : s.failing) over.push_back(failing_text(*p));
    v.detail += "; over: " + join_at_most(over, 4);
  }
  v.source =
      "ISO 7730:2005 Table A.4 (categories A and B: warm ceiling 5 K, cool wall 10 K, cool "
      "ceiling 14 K, warm wall 23 K) and ASHRAE 55 sec. 5.3; recalled";
  return v;
}

ComfortVerdict floor_verdict(const Scene& scene, const std::vector<SurfaceHeat>& surfaces) {
  ComfortVerdict v;
  v.what = "floor surface temperature";
  v.source =
      "ISO 7730:2005 Table A.5 (categories A and B: 19 to 29 C) and ASHRAE 55 sec. 5.3 "
      "(19 to 29 C, people in normal indoor shoes); recalled";
  double lo = INFINITY, hi = -INFINITY;
  std::vector<std::string> names;
  for (std::size_t k : floor_surfaces(scene)) {
    if (k >= surfaces.size()) continue;
    lo = std::min(lo, surfaces[k].temperature_min_K);
    hi = std::max(hi, surfaces[k].temperature_max_K);
    names.push_back(surfaces[k].name);
  }
  if (names.empty()) {
    v.assessed = false;
    v.detail = "no surface of the model faces up at its lowest level";
    return v;
  }
  v.pass = lo - kZeroCelsius >= kFloorLow_C && hi - kZeroCelsius <= kFloorHigh_C;
  v.detail = join(names) + ": " + celsius(lo) + (hi - lo > 0.05 ? " to " + celsius(hi) : "") +
             " (range 19 to 29 C)";
  return v;
}

ComfortVerdict pmv_verdict(const std::vector<PointComfort>& points, const HeatingTarget& t) {
  ComfortVerdict v;
  const bool band = t.kind == TargetKind::pmv_band;
  const double low = band ? t.pmv_low : -kPmvB, high = band ? t.pmv_high : kPmvB;
  v.what = "PMV within " + rounded("%+.2f", low) + " .. " + rounded("%+.2f", high);
  v.source = band ? "the planner's band; PMV, PPD by ISO 7730:2005 sec. 4 (equations recalled)"
                  : "ISO 7730:2005 Table A.1, category B (-0.5 < PMV < +0.5, PPD < 10 %); "
                    "recalled";
  double lo = INFINITY, hi = -INFINITY, ppd = 0;
  std::size_t inside = 0, outside_ranges = 0;
  for (const PointComfort& p : points) {
    lo = std::min(lo, p.pmv->pmv), hi = std::max(hi, p.pmv->pmv), ppd = std::max(ppd, p.pmv->ppd);
    inside += p.pmv->pmv >= low - 1e-6 && p.pmv->pmv <= high;
    outside_ranges += !p.pmv->in_range();
  }
  v.pass = inside == points.size();
  v.detail = "PMV " + rounded("%+.2f", lo) + " to " + rounded("%+.2f", hi) + ", PPD up to " +
             rounded("%.1f %%", ppd) + "; " + share_text(inside, points.size()) +
             " points in the band";
  if (outside_ranges)
    v.detail += "; at " + std::to_string(outside_ranges) +
                " points the conditions leave the ranges of ISO 7730 sec. 4.1 (extrapolated)";
  return v;
}

}  // namespace

std::vector<std::size_t> floor_surfaces(const Scene& scene) {
  std::vector<std::size_t> out;
  const double top = scene.bounds.lo.z + kFloorBand_m;
  for (std::size_t s = 0; s < scene.surfaces.size(); ++s) {
    const Surface& surf = scene.surfaces[s];
    bool floor = surf.triangle_count > 0;
    for (std::uint32_t t = surf.first_triangle;
         floor && t < surf.first_triangle + surf.triangle_count; ++t) {
      floor = scene.normal(t).z > kUpCosine;
      for (std::uint32_t v : scene.triangles[t].v) floor = floor && scene.vertices[v].z <= top;
    }
    if (floor) out.push_back(s);
  }
  return out;
}

std::vector<ComfortVerdict> comfort_verdicts(const Scene& scene,
                                             const std::vector<SurfaceHeat>& surfaces,
                                             const std::vector<PointComfort>& points,
                                             const HeatingTarget& target) {
  std::vector<ComfortVerdict> out = {target_verdict(points, target), asymmetry_verdict(points),
                                     floor_verdict(scene, surfaces)};
  const bool pmv = !points.empty() && std::all_of(points.begin(), points.end(),
                                                  [](const PointComfort& p) { return p.pmv; });
  if (pmv) out.push_back(pmv_verdict(points, target));
  ComfortVerdict vertical;
  vertical.what = "vertical air temperature difference (head to ankles)";
  vertical.assessed = false;
  vertical.detail =
      "not assessed: the model has one well-mixed room air temperature, no air temperature "
      "profile with height";
  vertical.source =
      "ISO 7730:2005 Table A.3 (category B: under 3 K between 0.1 m and 1.1 m) and ASHRAE 55 "
      "sec. 5.3; recalled";
  out.push_back(vertical);
  return out;
}

}  // namespace hearthray
