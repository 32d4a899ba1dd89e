// Pieces shared by every picture: fitted and wrapped text, round tick values with true minus
// signs, the colour bar and legend swatches.
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>

#include "core/text.hpp"
#include "pictures/canvas.hpp"

namespace hearthray::pictures {
namespace {

// Bytes of the UTF-8 character that starts at s[i].
std::size_t char_length(const std::string& s, std::size_t i) {
  const auto c = static_cast<unsigned char>(s[i]);
  const std::size_t n = c < 0x80 ? 1 : c < 0xe0 ? 2 : c < 0xf0 ? 3 : 4;
  return std::min(n, s.size() - i);
}

struct BarSizes {
  double bar, tick, gap;
};
BarSizes bar_sizes(double font_size) {
  return {1.1 * font_size, 0.45 * font_size, 0.3 * font_size};
}

}  // namespace

std::string fit_text(const Canvas& canvas, const std::string& utf8, double max_width, double size,
                     Weight weight) {
  if (canvas.text_width(utf8, size, weight) <= max_width) return utf8;
  const std::string ellipsis = "\u2026";
  std::string best;
  for (std::size_t i = 0; i < utf8.size(); i += char_length(utf8, i)) {
    const std::string candidate = utf8.substr(0, i) + ellipsis;
    if (canvas.text_width(candidate, size, weight) > max_width) break;
    best = candidate;
  }
  return best;
}

std::vector<std::string> wrap_text(const Canvas& canvas, const std::string& utf8, double max_width,
                                   double size) {
  std::vector<std::string> lines;
  std::string current;
  std::size_t start = 0;
  while (start <= utf8.size()) {
    std::size_t end = utf8.find(' ', start);
    if (end == std::string::npos) end = utf8.size();
    const std::string word = utf8.substr(start, end - start);
    const std::string joined = current.empty() ? word : current + " " + word;
    if (!current.empty() && canvas.text_width(joined, size) > max_width) {
      lines.push_back(current);
      current = word;
    } else {
      current = joined;
    }
    start = end + 1;
  }
  if (!current.empty()) lines.push_back(current);
  for (std::string& l : lines) l = fit_text(canvas, l, max_width, size);
  return lines;
}

std::string format_number(double value, int decimals) {
  const std::string spec = "%." + std::to_string(std::clamp(decimals, 0, 12)) + "f";
  std::string s = rounded(spec.c_str(), value);
  if (s[0] == '-') {
    s.erase(0, 1);
    if (std::strtod(s.c_str(), nullptr) != 0) s = "\u2212" + s;  // no "−0"
  }
  return s;
}

std::vector<Tick> round_ticks(double lo, double hi, int most) {
  std::vector<Tick> ticks;
  if (!(hi > lo) || most < 2) return ticks;
  const double range = hi - lo;
  const double eps = 1e-9 * range;
  int power = int(std::floor(std::log10(range / most))) - 1;
  static constexpr double kMantissa[4] = {1, 2, 2.5, 5};
  for (int attempt = 0; attempt < 40; ++attempt, ++power) {
    for (int m = 0; m < 4; ++m) {
      const double step = kMantissa[m] * std::pow(10.0, power);
      const double first = std::ceil((lo - eps) / step), last = std::floor((hi + eps) / step);
      if (last - first + 1 > most) continue;
      const int decimals = std::max(0, -power + (m == 2 ? 1 : 0));
      for (double k = first; k <= last; k += 1) {
        const double v = k * step;
        ticks.push_back({v, format_number(v, decimals)});
      }
      return ticks;
    }
  }
  return ticks;
}

double colour_bar_width(const Canvas& canvas, const ColourBar& bar, double font_size) {
  const BarSizes s = bar_sizes(font_size);
  double label = 0;
  for (const Tick& t : round_ticks(bar.lo, bar.hi, 7))
    label = std::max(label, canvas.text_width(t.label, font_size));
  double mark = 0;
  for (const BarMark& m : bar.marks)
    mark = std::max(mark, s.gap + canvas.text_width(m.label, font_size, Weight::bold));
  return s.bar + s.tick + s.gap + label + mark;
}

void draw_colour_bar(Canvas& canvas, const ColourBar& bar, double x, double top, double bottom,
                     double font_size, const Colour& ink) {
  const BarSizes s = bar_sizes(font_size);
  canvas.vertical_gradient(x, top, s.bar, bottom - top, bar.colour);
  canvas.stroke_rect(x, top, s.bar, bottom - top, 1, ink);
  const double digit_middle = 0.36 * font_size;  // baseline below a tick: digits centred on it
  auto y_of = [&](double v) { return bottom - (v - bar.lo) / (bar.hi - bar.lo) * (bottom - top); };
  for (const Tick& t : round_ticks(bar.lo, bar.hi, 7)) {
    const double y = y_of(t.value);
    const bool zero = bar.mark_zero && t.value == 0;
    canvas.line(x + s.bar, y, x + s.bar + s.tick, y, 1, ink);
    if (zero) canvas.line(x, y, x + s.bar + s.tick, y, 2, ink);
    canvas.text(x + s.bar + s.tick + s.gap, y + digit_middle, t.label, font_size, ink, Align::left,
                zero ? Weight::bold : Weight::regular);
  }
  double label = 0;
  for (const Tick& t : round_ticks(bar.lo, bar.hi, 7))
    label = std::max(label, canvas.text_width(t.label, font_size));
  for (const BarMark& m : bar.marks) {
    if (!(m.value >= bar.lo && m.value <= bar.hi)) continue;
    const double y = y_of(m.value);
    canvas.line(x - 0.3 * s.tick, y, x + s.bar + s.tick, y, 2.5, ink);
    canvas.text(x + s.bar + s.tick + 2 * s.gap + label, y + digit_middle, m.label, font_size, ink,
                Align::left, Weight::bold);
  }
}

double draw_swatch(Canvas& canvas, double x, double y, double font_size, const Colour& fill,
                   const Colour& ink, const std::string& name) {
  const double side = 0.9 * font_size;
  canvas.fill_rect(x, y, side, side, fill);
  canvas.stroke_rect(x, y, side, side, 1, ink);
  canvas.text(x + side + 0.5 * font_size, y + 0.82 * side, name, font_size, ink);
  return 1.45 * font_size;
}

void draw_scale_bar(Canvas& canvas, double x, double y, double span_m, double ppm, double font_size,
                    const Colour& ink) {
  const double want = 0.25 * span_m;
  double length = 0.1;
  for (double candidate : {0.2, 0.25, 0.5, 1.0, 2.0, 2.5, 5.0, 10.0, 20.0, 50.0, 100.0})
    if (candidate <= want) length = candidate;
  const double w = length * ppm, h = 6;
  canvas.fill_rect(x, y, w / 2, h, ink);
  canvas.fill_rect(x + w / 2, y, w / 2, h, Colour{1, 1, 1});
  canvas.stroke_rect(x, y, w, h, 1, ink);
  const double base = y + h + 1.1 * font_size;
  canvas.text(x, base, "0", font_size, ink, Align::centre);
  canvas.text(x + w, base, rounded("%g m", length), font_size, ink, Align::centre);
}

std::string sentence_case(std::string text) {
  if (!text.empty() && text[0] >= 'a' && text[0] <= 'z') text[0] = char(text[0] - 'a' + 'A');
  return text;
}

}  // namespace hearthray::pictures
