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

// A named point on the canvas: its dot at (x, y), its name right or left of it, and the box
// that the dot and the name's white ground cover.
struct Label {
  const PointComfort* point = nullptr;
  double x = 0, y = 0, text_x = 0, width = 0;
  bool left = false;
  std::array<double, 4> box{};  // x0, y0, x1, y1
};

std::vector<Label> named_labels(const Canvas& c, const Plan& plan,
                                const std::vector<PointComfort>& points) {
  std::vector<Label> labels;
  for (const PointComfort& p : points) {
    if (p.point.grid_i >= 0) continue;
    Label l;
    l.point = &p;
    l.x = plan.px(p.point.position.x), l.y = plan.py(p.point.position.y);
    l.width = c.text_width(p.point.name, 0.9 * kFont);
    l.left = l.x + 8 + l.width > plan.px(plan.box.hi.x) - 4;  // keep the name in the room
    l.text_x = l.left ? l.x - 8 : l.x + 8;
    const double x0 = l.left ? l.text_x - l.width - 2 : l.x - 6;
    const double x1 = l.left ? l.x + 6 : l.text_x + l.width + 2;
    l.box = {x0, l.y - 0.95 * kFont, x1, l.y + 6};  // the dot reaches 5 px below
    labels.push_back(l);
  }
  return labels;
}

bool overlaps(const std::array<double, 4>& a, const std::array<double, 4>& b) {
  return a[0] < b[2] && b[0] < a[2] && a[1] < b[3] && b[1] < a[3];
}

// Grid cells in colour (edges on whole pixels, so neighbours meet without seams), and a cross
// on every point over its asymmetry limit on the asymmetry map, except where a named point's
// dot or name covers it. Returns whether any was over.
bool draw_cells(Canvas& c, const Plan& plan, const std::vector<const PointComfort*>& grid,
                MapQuantity q, double lo, double hi, const std::vector<Label>& labels) {
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
    const std::array<double, 4> box{cx - r - 2, cy - r - 2, cx + r + 2, cy + r + 2};
    if (std::any_of(labels.begin(), labels.end(),
                    [&](const Label& l) { return overlaps(box, l.box); }))
      continue;
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
void draw_named_points(Canvas& c, const std::vector<Label>& labels) {
  for (const Label& l : labels) {
    c.circle(l.x, l.y, 4, &kWhite, 1.5, kInk);
    c.fill_rect(l.left ? l.text_x - l.width - 2 : l.text_x - 2, l.y - 0.95 * kFont, l.width + 4,
                1.25 * kFont, kWhite);
    c.text(l.text_x, l.y + 0.05 * kFont, l.point->point.name, 0.9 * kFont, kInk,
           l.left ? Align::right : Align::left);
  }
}

// The legend from (x, y), in rows that end before `right`: what the grey ground, the lines and
// the marks on the plan mean.
void draw_legend(Canvas& c, double x, double y, double right, const std::array<bool, 2>& surfaces,
                 bool named, bool over) {
  const double fs = 0.9 * kFont, x0 = x;
  auto entry = [&](const std::string& name, auto mark) {
    const double w = 26 + c.text_width(name, fs);
    if (x > x0 && x + w > right) x = x0, y += 1.6 * fs;
    mark(x + 9, y);
    c.text(x + 26, y + 0.35 * fs, name, fs, kInk);
    x += w + 20;
  };
  entry("not mapped", [&](double cx, double cy) {
    c.fill_rect(cx - 7, cy - 7, 14, 14, kOutside);
    c.stroke_rect(cx - 7, cy - 7, 14, 14, 1, kSoftInk);
  });
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

  const std::vector<Label> labels = named_labels(c, plan, points);
  const bool over = draw_cells(c, plan, grid, q, lo, hi, labels);
  const std::array<bool, 2> surfaces = draw_surfaces(c, plan, scene, options.heaters);
  draw_named_points(c, labels);

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
  pictures::draw_scale_bar(c, plan.left, row - 3, plan.box.hi.x - plan.box.lo.x, plan.ppm,
                           0.9 * kFont, kInk);
  draw_legend(c, plan.left + 0.25 * plan.width() + 60, row, width - kPad, surfaces, !labels.empty(),
              over);
  return c.finish();
}

}  // namespace hearthray
