// Floor-plan maps of the comfort figures (see comfort_report.hpp), drawn with the pictures'
// drawing layer (pictures/canvas.hpp): grid cells coloured through the sequential colour map,
// the plan outline of glass and heaters over them, named points with their names, a colour
// bar with round ticks, a legend and a scale bar in metres.
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>
#include <tuple>

#include "core/text.hpp"
#include "hearthray/comfort_report.hpp"
#include "hearthray/error.hpp"
#include "hearthray/units.hpp"
#include "pictures/canvas.hpp"

namespace hearthray {
namespace {

using pictures::Align;
using pictures::Canvas;
using pictures::kInk;
using pictures::kSoftInk;
using pictures::Weight;

constexpr double kFont = 13;  // pixels
constexpr double kPad = 16, kTop = 58, kBottom = 56, kBarGap = 22;
constexpr Colour kBackground{0.969, 0.969, 0.961};
constexpr Colour kOutside{0.88, 0.88, 0.87};  // inside the room, outside the grid
constexpr Colour kGlass{0.31, 0.7, 0.95};
constexpr Colour kWhite{1, 1, 1};

double value(const PointComfort& p, MapQuantity q) {
  switch (q) {
    case MapQuantity::mean_radiant:
      return p.mean_radiant.kelvin - kZeroCelsius;
    case MapQuantity::operative:
      return p.operative_K - kZeroCelsius;
    default:
      return std::max(p.vertical.delta_K, p.horizontal.delta_K);
  }
}

std::string title(MapQuantity q) {
  switch (q) {
    case MapQuantity::mean_radiant:
      return "Mean radiant temperature";
    case MapQuantity::operative:
      return "Operative temperature";
    default:
      return "Radiant asymmetry, the larger of vertical and horizontal";
  }
}

// Edges of a surface that belong to one of its triangles only (vertices welded by position):
// its outline.
std::vector<std::array<Vec3, 2>> outline(const Scene& scene, const Surface& s) {
  using Key = std::tuple<long long, long long, long long>;
  const double q = 1e6 / std::max(scene.bounds.diagonal(), 1e-12);
  auto key = [&](const Vec3& v) {
    return Key{std::llround(v.x * q), std::llround(v.y * q), std::llround(v.z * q)};
  };
  std::map<std::pair<Key, Key>, std::pair<int, std::array<Vec3, 2>>> edges;
  for (std::uint32_t t = s.first_triangle; t < s.first_triangle + s.triangle_count; ++t) {
    for (int e = 0; e < 3; ++e) {
      const Vec3& a = scene.vertices[scene.triangles[t].v[e]];
      const Vec3& b = scene.vertices[scene.triangles[t].v[(e + 1) % 3]];
      Key ka = key(a), kb = key(b);
      if (kb < ka) std::swap(ka, kb);
      auto& entry = edges[{ka, kb}];
      ++entry.first;
      entry.second = {a, b};
    }
  }
  std::vector<std::array<Vec3, 2>> out;
  for (const auto& [k, e] : edges)
    if (e.first == 1) out.push_back(e.second);
  return out;
}

// Where the plan lies on the canvas: x right, y up, `ppm` pixels per metre.
struct Plan {
  Box3 box;
  double ppm = 100, left = kPad, top = kTop;
  double px(double x) const { return left + (x - box.lo.x) * ppm; }
  double py(double y) const { return top + (box.hi.y - y) * ppm; }
  double width() const { return std::ceil((box.hi.x - box.lo.x) * ppm); }
  double height() const { return std::ceil((box.hi.y - box.lo.y) * ppm); }
};

// Cell size from the grid: the spacing between neighbours (one point: the whole plan).
std::array<double, 2> cell_size(const std::vector<const PointComfort*>& grid, const Box3& box) {
  double dx = box.hi.x - box.lo.x, dy = box.hi.y - box.lo.y;
  for (const PointComfort* a : grid) {
    for (const PointComfort* b : grid) {
      if (b->point.grid_j == a->point.grid_j && b->point.grid_i == a->point.grid_i + 1)
        dx = b->point.position.x - a->point.position.x;
      if (b->point.grid_i == a->point.grid_i && b->point.grid_j == a->point.grid_j + 1)
        dy = b->point.position.y - a->point.position.y;
    }
  }
  return {dx, dy};
}

// Grid cells in colour (edges on whole pixels, so neighbours meet without seams), and a cross
// on every point over its asymmetry limit on the asymmetry map. Returns whether any was over.
bool draw_cells(Canvas& c, const Plan& plan, const std::vector<const PointComfort*>& grid,
                MapQuantity q, double lo, double hi) {
  const auto [dx, dy] = cell_size(grid, plan.box);
  bool over = false;
  for (const PointComfort* p : grid) {
    const Vec3& at = p->point.position;
    const double x0 = std::round(plan.px(at.x - dx / 2)), x1 = std::round(plan.px(at.x + dx / 2));
    const double y0 = std::round(plan.py(at.y + dy / 2)), y1 = std::round(plan.py(at.y - dy / 2));
    c.fill_rect(x0, y0, x1 - x0, y1 - y0, sequential_colour((value(*p, q) - lo) / (hi - lo)));
  }
  for (const PointComfort* p : grid) {
    if (q != MapQuantity::asymmetry || p->within_limits()) continue;
    over = true;
    const double cx = plan.px(p->point.position.x), cy = plan.py(p->point.position.y);
    const double r = 0.22 * std::min(dx, dy) * plan.ppm;
    c.line(cx - r, cy - r, cx + r, cy + r, 2, kInk);
    c.line(cx - r, cy + r, cx + r, cy - r, 2, kInk);
  }
  return over;
}

// Surfaces in plan: glass in light blue, heaters in white with a dark rim (other surfaces are
// not drawn: walls seen edge-on fall on the room outline, and the outlines of floor and
// ceiling pieces only clutter). Rims first, so that no rim covers the white of a neighbour.
// Returns whether glass and heaters were drawn.
std::array<bool, 2> draw_surfaces(Canvas& c, const Plan& plan, const Scene& scene,
                                  const std::vector<std::string>& heaters) {
  std::vector<std::array<Vec3, 2>> glass, heater;
  for (const Surface& s : scene.surfaces) {
    std::string n = s.name;
    std::transform(n.begin(), n.end(), n.begin(),
                   [](unsigned char ch) { return char(std::tolower(ch)); });
    const bool is_glass =
        n.find("window") != std::string::npos || n.find("glass") != std::string::npos;
    const bool is_heater = std::find(heaters.begin(), heaters.end(), s.name) != heaters.end();
    if (!is_glass && !is_heater) continue;
    for (const auto& e : outline(scene, s)) (is_glass ? glass : heater).push_back(e);
  }
  auto draw = [&](const std::vector<std::array<Vec3, 2>>& edges, double width, const Colour& k) {
    for (const auto& e : edges)
      c.line(plan.px(e[0].x), plan.py(e[0].y), plan.px(e[1].x), plan.py(e[1].y), width, k);
  };
  draw(glass, 6, kGlass);
  draw(heater, 5, kInk);
  draw(heater, 2, kWhite);
  c.stroke_rect(plan.px(plan.box.lo.x), plan.py(plan.box.hi.y), plan.width(), plan.height(), 2.5,
                kInk);
  return {!glass.empty(), !heater.empty()};
}

// Named points: a white dot with a dark rim and the point's name beside it.
bool draw_named_points(Canvas& c, const Plan& plan, const std::vector<PointComfort>& points) {
  bool any = false;
  for (const PointComfort& p : points) {
    if (p.point.grid_i >= 0) continue;
    any = true;
    const double x = plan.px(p.point.position.x), y = plan.py(p.point.position.y);
    c.circle(x, y, 4, &kWhite, 1.5, kInk);
    const double w = c.text_width(p.point.name, 0.9 * kFont);
    const bool left = x + 8 + w > plan.px(plan.box.hi.x) - 4;  // keep the name in the room
    const double tx = left ? x - 8 : x + 8;
    c.fill_rect(left ? tx - w - 2 : tx - 2, y - 0.95 * kFont, w + 4, 1.25 * kFont, kWhite);
    c.text(tx, y + 0.05 * kFont, p.point.name, 0.9 * kFont, kInk,
           left ? Align::right : Align::left);
  }
  return any;
}

// A scale bar of a round length (about a quarter of the plan's width) in metres, black and
// white halves, its left end at (x, y).
void draw_scale_bar(Canvas& c, double x, double y, const Plan& plan) {
  const double want = 0.25 * (plan.box.hi.x - plan.box.lo.x);
  double length = 0.1;
  for (double candidate : {0.2, 0.25, 0.5, 1.0, 2.0, 2.5, 5.0, 10.0, 20.0, 50.0, 100.0})
    if (candidate <= want) length = candidate;
  const double w = length * plan.ppm, h = 6;
  c.fill_rect(x, y, w / 2, h, kInk);
  c.fill_rect(x + w / 2, y, w / 2, h, kWhite);
  c.stroke_rect(x, y, w, h, 1, kInk);
  const double base = y + h + kFont;
  c.text(x, base, "0", 0.9 * kFont, kInk, Align::centre);
  c.text(x + w, base, rounded("%g m", length), 0.9 * kFont, kInk, Align::centre);
}

// The legend in one row from (x, y): what the lines and marks on the plan mean.
void draw_legend(Canvas& c, double x, double y, const std::array<bool, 2>& surfaces, bool named,
                 bool over) {
  const double fs = 0.9 * kFont;
  auto entry = [&](const std::string& name, auto mark) {
    mark(x + 9, y);
    c.text(x + 26, y + 0.35 * fs, name, fs, kInk);
    x += 26 + c.text_width(name, fs) + 20;
  };
  if (surfaces[0])
    entry("glass", [&](double cx, double cy) { c.line(cx - 9, cy, cx + 9, cy, 6, kGlass); });
  if (surfaces[1])
    entry("heater", [&](double cx, double cy) {
      c.line(cx - 9, cy, cx + 9, cy, 5, kInk);
      c.line(cx - 9, cy, cx + 9, cy, 2, kWhite);
    });
  if (named)
    entry("named point", [&](double cx, double cy) { c.circle(cx, cy, 4, &kWhite, 1.5, kInk); });
  if (over)
    entry("over its limit", [&](double cx, double cy) {
      c.line(cx - 5, cy - 5, cx + 5, cy + 5, 2, kInk);
      c.line(cx - 5, cy + 5, cx + 5, cy - 5, 2, kInk);
    });
}

// The asymmetry limits of the cases that govern the grid points, as marks on the colour bar
// ("limit, warm ceiling"); none on the temperature maps.
std::vector<pictures::BarMark> limit_marks(const std::vector<const PointComfort*>& grid,
                                           MapQuantity q) {
  std::map<double, std::string> limits;
  if (q != MapQuantity::asymmetry) return {};
  for (const PointComfort* p : grid) {
    const Asymmetry& a =
        p->vertical.delta_K / p->vertical.limit_K >= p->horizontal.delta_K / p->horizontal.limit_K
            ? p->vertical
            : p->horizontal;
    limits.emplace(a.limit_K, "limit, " + to_string(a.kind));
  }
  std::vector<pictures::BarMark> marks;
  for (const auto& [value, label] : limits) marks.push_back({value, label});
  return marks;
}

}  // namespace

std::pair<double, double> map_range(const std::vector<PointComfort>& points, MapQuantity q) {
  double lo = INFINITY, hi = -INFINITY, smallest_limit = INFINITY;
  for (const PointComfort& p : points) {
    if (p.point.grid_i < 0) continue;
    lo = std::min(lo, value(p, q));
    hi = std::max(hi, value(p, q));
    smallest_limit = std::min({smallest_limit, p.vertical.limit_K, p.horizontal.limit_K});
  }
  if (!(lo <= hi)) return {0, 1};
  if (q == MapQuantity::asymmetry && std::isfinite(smallest_limit)) {
    lo = std::min(lo, 0.0);
    hi = std::max(hi, 1.1 * smallest_limit);
  }
  if (hi - lo < 0.1) lo -= 0.05, hi += 0.05;
  return {lo, hi};
}

Picture comfort_map(const Scene& scene, const std::vector<PointComfort>& points, MapQuantity q,
                    const MapOptions& options) {
  std::vector<const PointComfort*> grid;
  for (const PointComfort& p : points)
    if (p.point.grid_i >= 0) grid.push_back(&p);
  if (grid.empty()) throw InputError("a comfort map needs grid points: add [comfort.grid]");
  auto [lo, hi] = map_range(points, q);
  if (options.range_lo) lo = *options.range_lo;
  if (options.range_hi) hi = *options.range_hi;
  if (!(lo < hi))
    throw InputError("the range of a comfort map needs its low end below its high end");
  Plan plan;
  plan.box = scene.bounds;
  plan.ppm = options.pixels_per_metre;
  const pictures::ColourBar bar{lo, hi, sequential_colour, false, limit_marks(grid, q)};
  Canvas measure(16, 16);
  const double bar_width = pictures::colour_bar_width(measure, bar, kFont);
  const int width = int(std::ceil(kPad + plan.width() + kBarGap + bar_width + kPad));
  const int height = int(std::ceil(kTop + plan.height() + kBottom));
  Canvas c(width, height);
  c.fill_rect(0, 0, width, height, kBackground);
  c.fill_rect(plan.left, plan.top, plan.width(), plan.height(), kOutside);

  const bool over = draw_cells(c, plan, grid, q, lo, hi);
  const std::array<bool, 2> surfaces = draw_surfaces(c, plan, scene, options.heaters);
  const bool named = draw_named_points(c, plan, points);

  const double bx = plan.left + plan.width() + kBarGap;
  c.text(bx, plan.top - 8, q == MapQuantity::asymmetry ? "in K" : "in °C", kFont, kInk);
  pictures::draw_colour_bar(c, bar, bx, plan.top, plan.top + plan.height(), kFont, kInk);
  c.text(kPad, 24,
         pictures::fit_text(c, title(q) + options.title_suffix, width - 2 * kPad, 1.2 * kFont,
                            Weight::bold),
         1.2 * kFont, kInk, Align::left, Weight::bold);
  char subtitle[160];
  std::snprintf(subtitle, sizeof subtitle,
                "Plan %.1f m × %.1f m seen from above, points %.2f m above the floor",
                plan.box.hi.x - plan.box.lo.x, plan.box.hi.y - plan.box.lo.y,
                grid.front()->point.position.z - plan.box.lo.z);
  c.text(kPad, 44, pictures::fit_text(c, subtitle, width - 2 * kPad, kFont), kFont, kSoftInk);
  const double row = plan.top + plan.height() + 20;
  draw_scale_bar(c, plan.left, row - 3, plan);
  draw_legend(c, plan.left + 0.25 * plan.width() * 1.0 + 60, row, surfaces, named, over);
  return c.finish();
}

}  // namespace hearthray
