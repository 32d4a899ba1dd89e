// Floor-plan maps of the comfort figures (see comfort_report.hpp): grid cells coloured through
// the render module's sequential colour map, the plan outline of every surface drawn over them,
// a colour bar, and labels in a small 3x5 font of our own (the render module keeps its font
// private).
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>
#include <tuple>

#include "hearthray/comfort_report.hpp"
#include "hearthray/error.hpp"
#include "hearthray/units.hpp"

namespace hearthray {
namespace {

constexpr int kScale = 2;  // font pixels per glyph pixel
constexpr int kLeft = 30, kTop = 44, kBottom = 34, kBarGap = 24, kBarWidth = 22, kRight = 80;

// 3x5 glyphs, rows top to bottom, '1' = ink.
const std::map<char, const char*>& glyphs() {
  static const std::map<char, const char*> g = {
      {'0', "111101101101111"}, {'1', "010110010010111"}, {'2', "111001111100111"},
      {'3', "111001111001111"}, {'4', "101101111001001"}, {'5', "111100111001111"},
      {'6', "111100111101111"}, {'7', "111001001001001"}, {'8', "111101111101111"},
      {'9', "111101111001111"}, {'.', "000000000000010"}, {'-', "000000111000000"},
      {'A', "010101111101101"}, {'B', "110101110101110"}, {'C', "011100100100011"},
      {'D', "110101101101110"}, {'E', "111100110100111"}, {'F', "111100110100100"},
      {'G', "011100101101011"}, {'H', "101101111101101"}, {'I', "111010010010111"},
      {'J', "001001001101010"}, {'K', "101101110101101"}, {'L', "100100100100111"},
      {'M', "101111111101101"}, {'N', "110101101101101"}, {'O', "010101101101010"},
      {'P', "110101110100100"}, {'Q', "010101101110011"}, {'R', "110101110101101"},
      {'S', "011100010001110"}, {'T', "111010010010010"}, {'U', "101101101101111"},
      {'V', "101101101101010"}, {'W', "101101111111101"}, {'X', "101101010101101"},
      {'Y', "101101010010010"}, {'Z', "111001010100111"}, {'(', "010100100100010"},
      {')', "010001001001010"}, {'/', "001001010100100"}, {',', "000000000010100"},
      {'%', "101001010100101"}, {':', "000010000010000"}, {'+', "000010111010000"}};
  return g;
}

class Canvas {
 public:
  Canvas(int w, int h, Rgb background) {
    image_.width = w;
    image_.height = h;
    image_.rgb.resize(std::size_t(3 * w * h));
    for (int y = 0; y < h; ++y)
      for (int x = 0; x < w; ++x) set(x, y, background);
  }
  void set(int x, int y, Rgb c) {
    if (x < 0 || y < 0 || x >= image_.width || y >= image_.height) return;
    const std::size_t i = 3 * (std::size_t(y) * std::size_t(image_.width) + std::size_t(x));
    image_.rgb[i] = c.r, image_.rgb[i + 1] = c.g, image_.rgb[i + 2] = c.b;
  }
  void fill(int x0, int y0, int x1, int y1, Rgb c) {
    for (int y = y0; y < y1; ++y)
      for (int x = x0; x < x1; ++x) set(x, y, c);
  }
  // A line `width` pixels thick (square brush).
  void line(double x0, double y0, double x1, double y1, int width, Rgb c) {
    const int steps = int(std::ceil(std::max(std::abs(x1 - x0), std::abs(y1 - y0)))) + 1;
    for (int k = 0; k <= steps; ++k) {
      const double t = double(k) / steps;
      const int x = int(std::lround(x0 + t * (x1 - x0))), y = int(std::lround(y0 + t * (y1 - y0)));
      fill(x - width / 2, y - width / 2, x - width / 2 + width, y - width / 2 + width, c);
    }
  }
  // Text in capitals; unknown characters are blanks. Returns the width drawn.
  int text(int x, int y, const std::string& s, Rgb c) {
    int cx = x;
    for (char ch : s) {
      const char up = char(std::toupper(static_cast<unsigned char>(ch)));
      const auto it = glyphs().find(up);
      if (it != glyphs().end()) {
        for (int r = 0; r < 5; ++r)
          for (int q = 0; q < 3; ++q)
            if (it->second[r * 3 + q] == '1')
              fill(cx + q * kScale, y + r * kScale, cx + (q + 1) * kScale, y + (r + 1) * kScale, c);
      }
      cx += 4 * kScale;
    }
    return cx - x;
  }
  Image take() { return std::move(image_); }

 private:
  Image image_;
};

Rgb rgb(const Colour& c) {
  auto b = [](double v) { return std::uint8_t(std::lround(255 * std::clamp(v, 0.0, 1.0))); };
  return {b(c.r), b(c.g), b(c.b)};
}

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
      return "MEAN RADIANT TEMPERATURE (C)";
    case MapQuantity::operative:
      return "OPERATIVE TEMPERATURE (C)";
    default:
      return "RADIANT ASYMMETRY, LARGER OF VERT/HORIZ (K) X: OVER LIMIT";
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

}  // namespace

Image comfort_map(const Scene& scene, const std::vector<PointComfort>& points, MapQuantity q,
                  const MapOptions& options) {
  std::vector<const PointComfort*> grid;
  for (const PointComfort& p : points)
    if (p.point.grid_i >= 0) grid.push_back(&p);
  if (grid.empty()) throw InputError("a comfort map needs grid points: add [comfort.grid]");

  const Box3& box = scene.bounds;
  const double ppm = options.pixels_per_metre;
  const int map_w = int(std::ceil((box.hi.x - box.lo.x) * ppm));
  const int map_h = int(std::ceil((box.hi.y - box.lo.y) * ppm));
  const int width = kLeft + map_w + kBarGap + kBarWidth + kRight;
  const int height = kTop + map_h + kBottom;
  Canvas c(width, height, {247, 247, 245});
  auto px = [&](double x) { return kLeft + (x - box.lo.x) * ppm; };
  auto py = [&](double y) { return kTop + (box.hi.y - y) * ppm; };

  double lo = INFINITY, hi = -INFINITY;
  for (const PointComfort* p : grid) {
    lo = std::min(lo, value(*p, q));
    hi = std::max(hi, value(*p, q));
  }
  if (hi - lo < 0.1) lo -= 0.05, hi += 0.05;

  // Cell size from the grid: the spacing between neighbours (one point: the whole plan).
  double dx = box.hi.x - box.lo.x, dy = box.hi.y - box.lo.y;
  for (const PointComfort* a : grid) {
    for (const PointComfort* b : grid) {
      if (b->point.grid_j == a->point.grid_j && b->point.grid_i == a->point.grid_i + 1)
        dx = b->point.position.x - a->point.position.x;
      if (b->point.grid_i == a->point.grid_i && b->point.grid_j == a->point.grid_j + 1)
        dy = b->point.position.y - a->point.position.y;
    }
  }
  c.fill(kLeft, kTop, kLeft + map_w, kTop + map_h, {225, 225, 222});
  for (const PointComfort* p : grid) {
    const double v = value(*p, q);
    const Rgb colour = rgb(sequential_colour((v - lo) / (hi - lo)));
    const Vec3& at = p->point.position;
    const int x0 = int(std::lround(px(at.x - dx / 2))), x1 = int(std::lround(px(at.x + dx / 2)));
    const int y0 = int(std::lround(py(at.y + dy / 2))), y1 = int(std::lround(py(at.y - dy / 2)));
    c.fill(x0, y0, x1, y1, colour);
    if (q == MapQuantity::asymmetry && !p->within_limits()) {
      const double cx = px(at.x), cy = py(at.y), r = 0.2 * std::min(dx, dy) * ppm;
      c.line(cx - r, cy - r, cx + r, cy + r, 2, {0, 0, 0});
      c.line(cx - r, cy + r, cx + r, cy - r, 2, {0, 0, 0});
    }
  }
  for (const PointComfort& p : points) {
    if (p.point.grid_i >= 0) continue;
    const int x = int(std::lround(px(p.point.position.x))),
              y = int(std::lround(py(p.point.position.y)));
    c.fill(x - 3, y - 3, x + 4, y + 4, {0, 0, 0});
    c.fill(x - 1, y - 1, x + 2, y + 2, {255, 255, 255});
  }

  // Surfaces in plan: glass in light blue, heaters in white with a dark rim (other surfaces
  // are not drawn: walls seen edge-on fall on the room outline, and the outlines of floor and
  // ceiling pieces only clutter). Passes in order, so that no rim is drawn over the white line
  // of a neighbouring segment.
  std::vector<std::array<Vec3, 2>> glass, heater, other;
  for (const Surface& s : scene.surfaces) {
    std::string n = s.name;
    std::transform(n.begin(), n.end(), n.begin(),
                   [](unsigned char ch) { return char(std::tolower(ch)); });
    auto& into =
        n.find("window") != std::string::npos || n.find("glass") != std::string::npos ? glass
        : std::find(options.heaters.begin(), options.heaters.end(), s.name) != options.heaters.end()
            ? heater
            : other;
    if (&into == &other) continue;
    for (const auto& e : outline(scene, s)) into.push_back(e);
  }
  auto draw = [&](const std::vector<std::array<Vec3, 2>>& edges, int width, Rgb colour) {
    for (const auto& e : edges)
      c.line(px(e[0].x), py(e[0].y), px(e[1].x), py(e[1].y), width, colour);
  };
  draw(glass, 7, {80, 190, 255});
  draw(heater, 5, {20, 20, 20});
  draw(heater, 2, {255, 255, 255});
  // Room outline.
  c.line(px(box.lo.x), py(box.lo.y), px(box.hi.x), py(box.lo.y), 3, {0, 0, 0});
  c.line(px(box.hi.x), py(box.lo.y), px(box.hi.x), py(box.hi.y), 3, {0, 0, 0});
  c.line(px(box.hi.x), py(box.hi.y), px(box.lo.x), py(box.hi.y), 3, {0, 0, 0});
  c.line(px(box.lo.x), py(box.hi.y), px(box.lo.x), py(box.lo.y), 3, {0, 0, 0});

  // Colour bar with three labels.
  const int bx = kLeft + map_w + kBarGap;
  for (int y = 0; y < map_h; ++y) {
    const double t = 1 - double(y) / std::max(1, map_h - 1);
    c.fill(bx, kTop + y, bx + kBarWidth, kTop + y + 1, rgb(sequential_colour(t)));
  }
  char label[32];
  for (int k = 0; k <= 2; ++k) {
    const double v = hi - (hi - lo) * k / 2;
    std::snprintf(label, sizeof label, "%.1f", v);
    const int y = kTop + (map_h - 1) * k / 2;
    c.fill(bx + kBarWidth, y, bx + kBarWidth + 5, y + 1, {0, 0, 0});
    c.text(bx + kBarWidth + 8, std::clamp(y - 5, kTop - 4, kTop + map_h - 6), label, {0, 0, 0});
  }
  c.text(kLeft, 10, title(q), {0, 0, 0});
  std::snprintf(label, sizeof label, "PLAN %.1f X %.1f M, Z UP", box.hi.x - box.lo.x,
                box.hi.y - box.lo.y);
  c.text(kLeft, 26, label, {90, 90, 90});
  c.text(kLeft, kTop + map_h + 12, "X RIGHT, Y UP. BLUE: GLASS. WHITE: HEATERS", {90, 90, 90});
  return c.take();
}

}  // namespace hearthray
