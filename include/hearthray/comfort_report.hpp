// Outputs of the comfort figures: the table for the terminal, the summary over the points,
// comfort.csv, floor-plan maps, plain cautions about hot surfaces, and one line per scene for
// comparing layouts. Every report carries kComfortCaution.
#pragma once

#include <iosfwd>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "hearthray/comfort.hpp"
#include "hearthray/picture.hpp"
#include "hearthray/thermal_model.hpp"

namespace hearthray {

inline constexpr const char* kComfortCaution =
    "These comfort figures are engineering estimates from a gray, diffuse radiation model with "
    "Monte Carlo statistics and standard curves; they are no substitute for local codes, the "
    "heater maker's instructions and professional design.";

// Min, mean and max over points, and the share of points within each limit.
struct Range {
  double min = 0, mean = 0, max = 0;
};
struct ComfortSummary {
  std::size_t points = 0;
  Range mean_radiant_K, operative_K, vertical_K, horizontal_K;
  double within_vertical = 0;    // share of points (0..1) with vertical asymmetry within limit
  double within_horizontal = 0;  // the same, horizontal
  double within_both = 0;
  // The same as exact counts, so that one point of 224 over its limit reads "223 of 224", not
  // "100 %"; and the points over a limit, in input order.
  std::size_t count_vertical = 0, count_horizontal = 0, count_both = 0;
  std::vector<const PointComfort*> failing;
  const PointComfort* worst = nullptr;  // largest asymmetry relative to its limit
  double worst_ratio = 0;               // that asymmetry / its limit
};
ComfortSummary summarise_comfort(const std::vector<PointComfort>& points);

// One line per point: name, kind, t_mr, t_o (with standard errors), asymmetries with their
// cases and PD, verdict; then the summary and where the limits come from.
void print_comfort_table(std::ostream& out, const std::vector<PointComfort>& points,
                         const ComfortSummary& summary);

// One row per point: position, body, t_mr, the six t_pr, asymmetries, PD, t_o (°C), standard
// errors, lost fraction, verdict.
void write_comfort_csv(std::ostream& out, const std::vector<PointComfort>& points);

// A caution for the comfort report. The first two kinds are about one surface of one scene;
// the last two are general and the same for every scene.
enum class CautionKind {
  hot_in_reach,     // a hot surface comes down within reach
  glass_near_heat,  // glass close to a hot surface
  clearances,       // keep the maker's clearances (general)
  estimates,        // kComfortCaution: the figures are estimates (general)
};
struct Caution {
  CautionKind kind = CautionKind::estimates;
  std::string text;

  bool general() const { return kind == CautionKind::clearances || kind == CautionKind::estimates; }
};

// Plain warnings: hot surfaces within reach, glass close to hot surfaces, and the general
// cautions (clearances from anything that burns; local codes; the maker's instructions).
std::vector<Caution> comfort_cautions(const Scene& scene, const std::vector<SurfaceHeat>& surfaces);

// Heated surfaces: those given a positive power or heat flux that put heat in at the solved
// state (a panel the size command's split switched off is not counted).
struct HeaterSummary {
  double power_W = 0;
  double surface_max_K = 0;  // hottest piece of any heated surface
  std::size_t count = 0;
};
HeaterSummary summarise_heaters(const ThermalModel& model,
                                const std::vector<SurfaceHeat>& surfaces);

// "223 of 224" (an exact share, never rounded to 100 %).
std::string share_text(std::size_t count, std::size_t of);
// "g_3_4 (vertical 5.4 K, warm ceiling, limit 5 K)": a point over its limit and why.
std::string failing_text(const PointComfort& p);

// A floor-plan map of one quantity over the grid points (x right, y up), the room outline and
// the plan outline of heated surfaces (white with a dark rim) and of surfaces whose name holds
// "window" or "glass" (light blue) drawn over it; named points with their names; a colour bar
// with round ticks, a legend and a scale bar in metres. Written as PNG, SVG or PDF.
enum class MapQuantity { mean_radiant, operative, asymmetry };
struct MapOptions {
  int pixels_per_metre = 100;
  std::vector<std::string> heaters;  // surface names drawn as heaters
  // Colour range (°C for the temperature maps, K for asymmetry); by default the points' own.
  // Maps compared side by side are given one range, so equal colours mean equal values.
  std::optional<double> range_lo, range_hi;
  std::string title_suffix;  // e.g. the scene's name, after the quantity in the title
};
// The points' own range of the map of `q` (the asymmetry map's reaching up to the smallest
// limit that applies, so the limit shows on its colour bar).
std::pair<double, double> map_range(const std::vector<PointComfort>& points, MapQuantity q);
// Throws InputError when no point belongs to a grid.
Picture comfort_map(const Scene& scene, const std::vector<PointComfort>& points, MapQuantity q,
                    const MapOptions& options);

}  // namespace hearthray
