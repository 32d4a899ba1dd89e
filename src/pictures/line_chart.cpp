#include "pictures/line_chart.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "pictures/canvas.hpp"

namespace hearthray::pictures {
namespace {

constexpr double kFont = 15;
constexpr Colour kGrid{0.88, 0.88, 0.88};
constexpr Colour kWhite{1, 1, 1};

struct Range {
  double lo = std::numeric_limits<double>::infinity();
  double hi = -std::numeric_limits<double>::infinity();
  void add(double v) {
    if (std::isfinite(v)) lo = std::min(lo, v), hi = std::max(hi, v);
  }
  // A little room around the data, and a width when all values are equal.
  void settle(bool from_zero) {
    if (!(hi >= lo)) lo = 0, hi = 1;
    if (from_zero) lo = std::min(lo, 0.0);
    if (hi - lo < 1e-12 * std::max(1.0, std::fabs(hi))) hi = lo + 1;
    const double pad = 0.04 * (hi - lo);
    if (!from_zero || lo < 0) lo -= pad;
    hi += pad;
  }
};

// A polyline with gaps at NaN; dashed lines are drawn as 9-pixel strokes 6 pixels apart.
void draw_series(Canvas& c, const std::vector<std::array<double, 2>>& points, bool dashed,
                 const Colour& colour) {
  double phase = 0;
  for (std::size_t i = 1; i < points.size(); ++i) {
    const auto& a = points[i - 1];
    const auto& b = points[i];
    if (!std::isfinite(a[1]) || !std::isfinite(b[1])) continue;
    if (!dashed) {
      c.line(a[0], a[1], b[0], b[1], 2.2, colour);
      continue;
    }
    const double dx = b[0] - a[0], dy = b[1] - a[1], length = std::hypot(dx, dy);
    for (double s = 0; s < length;) {
      const double in_period = std::fmod(phase + s, 15.0);
      const double step = std::min(length - s, in_period < 9 ? 9 - in_period : 15 - in_period);
      if (in_period < 9) {
        const double t0 = s / length, t1 = (s + step) / length;
        c.line(a[0] + dx * t0, a[1] + dy * t0, a[0] + dx * t1, a[1] + dy * t1, 2.2, colour);
      }
      s += step;
    }
    phase = std::fmod(phase + length, 15.0);
  }
}

}  // namespace

// One notation per axis: plain numbers when every tick lies within 0.001 .. 5000, else powers
// of ten for all of them, the 2 and 5 between written 2·10ⁿ and 5·10ⁿ.
std::vector<Tick> log_ticks(double lo, double hi) {
  static const char* kSuperscript[10] = {"⁰", "¹", "²", "³", "⁴", "⁵", "⁶", "⁷", "⁸", "⁹"};
  const int first = int(std::floor(lo)), last = int(std::ceil(hi));
  const bool minor = hi - lo < 3;
  const double top = minor ? std::log10(5000.0) : 3.0;  // the largest tick written plainly
  const bool plain = lo >= -3 - 1e-9 && hi <= top + 1e-9;
  auto power = [](int e) {
    std::string text = e < 0 ? "10⁻" : "10";
    for (char d : std::to_string(std::abs(e))) text += kSuperscript[d - '0'];
    return text;
  };
  auto label = [&](int m, int e) {
    if (plain) return format_number(m * std::pow(10.0, e), std::max(0, -e));
    return m == 1 ? power(e) : std::to_string(m) + "·" + power(e);
  };
  std::vector<Tick> ticks;
  for (int e = first; e <= last; ++e) {
    if (e >= lo && e <= hi) ticks.push_back({double(e), label(1, e)});
    for (int m : {2, 5}) {
      const double v = e + std::log10(double(m));
      if (minor && v >= lo && v <= hi) ticks.push_back({v, label(m, e)});
    }
  }
  return ticks;
}

namespace {

// A value on an axis: its log10 on a logarithmic one (NaN for values <= 0).
double axis_value(double v, bool log) {
  if (!log) return v;
  return v > 0 ? std::log10(v) : std::numeric_limits<double>::quiet_NaN();
}

}  // namespace

Picture draw_line_chart(const LineChart& chart) {
  Canvas c(chart.width, chart.height);
  c.fill_rect(0, 0, chart.width, chart.height, kWhite);
  Range xr, yr;
  for (const ChartSeries& s : chart.series) {
    for (double x : s.x) xr.add(axis_value(x, chart.log_x));
    for (double y : s.y) yr.add(axis_value(y, chart.log_y));
  }
  xr.settle(!chart.log_x);
  yr.settle(chart.y_from_zero && !chart.log_y);
  const double left = 78, right = chart.width - 24.0, top = chart.subtitle.empty() ? 58 : 80;
  const double legend_rows = std::ceil(double(chart.series.size()) / 3.0);
  const double bottom = chart.height - 58 - legend_rows * 22;
  c.text(left, 30, chart.title, kFont * 1.2, kInk, Align::left, Weight::bold);
  if (!chart.subtitle.empty())
    c.text(left, 54, fit_text(c, chart.subtitle, right - left, kFont * 0.9), kFont * 0.9, kSoftInk);
  auto X = [&](double x) { return left + (x - xr.lo) / (xr.hi - xr.lo) * (right - left); };
  auto Y = [&](double y) { return bottom - (y - yr.lo) / (yr.hi - yr.lo) * (bottom - top); };
  const std::vector<Tick> y_ticks =
      chart.log_y ? log_ticks(yr.lo, yr.hi) : round_ticks(yr.lo, yr.hi, 8);
  const std::vector<Tick> x_ticks =
      chart.log_x ? log_ticks(xr.lo, xr.hi) : round_ticks(xr.lo, xr.hi, 10);
  for (const Tick& t : y_ticks) {
    c.line(left, Y(t.value), right, Y(t.value), 1, kGrid);
    c.text(left - 8, Y(t.value) + kFont * 0.35, t.label, kFont * 0.85, kInk, Align::right);
  }
  for (const Tick& t : x_ticks) {
    c.line(X(t.value), top, X(t.value), bottom, 1, kGrid);
    c.text(X(t.value), bottom + kFont * 1.3, t.label, kFont * 0.85, kInk, Align::centre);
  }
  c.stroke_rect(left, top, right - left, bottom - top, 1, kInk);
  c.text((left + right) / 2, bottom + kFont * 2.6, chart.x_label, kFont * 0.9, kInk, Align::centre);
  c.text(12, top - 10, chart.y_label, kFont * 0.9, kInk);
  for (const ChartSeries& s : chart.series) {
    std::vector<std::array<double, 2>> points;
    for (std::size_t i = 0; i < s.x.size() && i < s.y.size(); ++i) {
      const double x = axis_value(s.x[i], chart.log_x), y = axis_value(s.y[i], chart.log_y);
      points.push_back(
          {std::isfinite(x) ? X(x) : NAN, std::isfinite(x) && std::isfinite(y) ? Y(y) : NAN});
    }
    draw_series(c, points, s.dashed, s.colour);
    if (s.markers)
      for (const auto& p : points)
        if (std::isfinite(p[1])) c.circle(p[0], p[1], 3.6, &s.colour, 0, s.colour);
  }
  const double column = (right - left) / 3.0;
  for (std::size_t i = 0; i < chart.series.size(); ++i) {
    const double x = left + column * double(i % 3), y = bottom + kFont * 3.8 + 22.0 * double(i / 3);
    std::vector<std::array<double, 2>> sample{{x, y - 5}, {x + 28, y - 5}};
    draw_series(c, sample, chart.series[i].dashed, chart.series[i].colour);
    if (chart.series[i].markers)
      c.circle(x + 14, y - 5, 3.6, &chart.series[i].colour, 0, chart.series[i].colour);
    c.text(x + 36, y, fit_text(c, chart.series[i].name, column - 44, kFont * 0.85), kFont * 0.85,
           kInk);
  }
  return c.finish();
}

}  // namespace hearthray::pictures
