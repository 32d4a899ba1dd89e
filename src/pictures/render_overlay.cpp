// Title, colour bar and category legend of the pictures.
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>

#include "pictures/render_parts.hpp"

namespace hearthray::render_detail {
namespace {

constexpr int kMaxHeadingLines = 3;

Rgb text_colour(const Rgb& background) {
  const double luma = 0.2126 * background.r + 0.7152 * background.g + 0.0722 * background.b;
  return luma > 128 ? Rgb{35, 35, 35} : Rgb{230, 230, 230};
}

Rgb to_rgb(const Colour& c) {
  auto q = [](double v) { return std::uint8_t(std::lround(std::clamp(v, 0.0, 1.0) * 255)); };
  return {q(c.r), q(c.g), q(c.b)};
}

void fill(Image& image, int x0, int y0, int x1, int y1, Rgb c) {
  for (int y = std::max(y0, 0); y < std::min(y1, image.height); ++y) {
    for (int x = std::max(x0, 0); x < std::min(x1, image.width); ++x) {
      std::uint8_t* p = &image.rgb[3 * (std::size_t(y) * image.width + std::size_t(x))];
      p[0] = c.r;
      p[1] = c.g;
      p[2] = c.b;
    }
  }
}

void frame(Image& image, int x0, int y0, int x1, int y1, int t, Rgb c) {
  fill(image, x0 - t, y0 - t, x1 + t, y0, c);
  fill(image, x0 - t, y1, x1 + t, y1 + t, c);
  fill(image, x0 - t, y0, x0, y1, c);
  fill(image, x1, y0, x1 + t, y1, c);
}

// The quantity's name wrapped into lines of at most `width` pixels, then its unit.
std::vector<std::string> heading(const PatchField& field, int width, int scale) {
  std::vector<std::string> lines;
  std::string current;
  std::size_t start = 0;
  while (start <= field.name.size()) {
    std::size_t end = field.name.find(' ', start);
    if (end == std::string::npos) end = field.name.size();
    const std::string word = field.name.substr(start, end - start);
    const std::string joined = current.empty() ? word : current + " " + word;
    if (!current.empty() && text_width(joined, scale) > width) {
      lines.push_back(current);
      current = word;
    } else {
      current = joined;
    }
    start = end + 1;
  }
  if (!current.empty()) lines.push_back(current);
  if (int(lines.size()) > kMaxHeadingLines) {
    lines.resize(kMaxHeadingLines);
    lines.back() += " ...";
  }
  if (!field.unit.empty() && field.unit != "-") lines.push_back("[" + field.unit + "]");
  for (std::string& l : lines) l = fit_text(l, width, scale);
  return lines;
}

std::string category_name(const RenderOptions& o, std::size_t k) {
  return k < o.categories.size() ? o.categories[k] : "#" + std::to_string(k);
}

// Bar width, tick length, and the gap between tick and label (wide enough that a tick does not
// read as a minus sign).
struct BarGeometry {
  int bar_width, tick_length, gap;
};
BarGeometry bar_geometry(int scale) {
  return {10 * scale, 3 * scale, 5 * scale};
}

}  // namespace

std::vector<std::string> tick_labels(double lo, double hi, int count) {
  const double step = (hi - lo) / double(std::max(count - 1, 1));
  const double magnitude = std::max(std::fabs(lo), std::fabs(hi));
  const bool fixed = magnitude >= 1e-3 && magnitude < 1e6;
  std::vector<std::string> labels(static_cast<std::size_t>(count));
  for (int digits = fixed ? 0 : 1; digits <= 12; ++digits) {
    bool good = true;
    for (int k = 0; k < count; ++k) {
      const double v = k + 1 == count ? hi : lo + k * step;
      char text[64];
      std::snprintf(text, sizeof text, fixed ? "%.*f" : "%.*g", digits, v);
      std::string s = text;
      if (std::fabs(std::strtod(text, nullptr) - v) > 0.01 * step) good = false;
      // "-0", "-0.00": a minus in front of zero reads as a sign error.
      if (s[0] == '-' && std::strtod(text, nullptr) == 0) s.erase(0, 1);
      labels[std::size_t(k)] = s;
    }
    if (good) break;
  }
  return labels;
}

Overlay plan_overlay(const RenderOptions& o, const PatchField& field, double lo, double hi,
                     const std::vector<std::size_t>& categories) {
  Overlay ov;
  ov.scale = std::max(1, int(std::lround(std::min(o.width / 400.0, o.height / 300.0))));
  ov.pad = 5 * ov.scale;
  const int line = kLineHeight * ov.scale;
  if (!o.title.empty() && line + 2 * ov.pad <= o.height / 4) ov.title_height = line + 2 * ov.pad;

  const int max_content = o.width * 2 / 5 - 2 * ov.pad;
  int content = text_width("no data", ov.scale) + 2 * line;
  if (!o.categories.empty()) {
    for (std::size_t k : categories)
      content = std::max(content, line + text_width(category_name(o, k), ov.scale));
  } else {
    const BarGeometry g = bar_geometry(ov.scale);
    int label = 0;
    for (const std::string& l : tick_labels(lo, hi, 5))
      label = std::max(label, text_width(l, ov.scale));
    content = std::max(content, g.bar_width + g.tick_length + g.gap + label);
  }
  // The heading wraps rather than widen the panel, down to lines of about 12 characters.
  const int wrap = std::min(max_content, std::max(content, text_width("000000000000", ov.scale)));
  for (const std::string& l : heading(field, wrap, ov.scale))
    content = std::max(content, text_width(l, ov.scale));
  ov.panel_width = std::min(content, max_content) + 2 * ov.pad;
  if (o.width - ov.panel_width < o.width / 2 || o.height - ov.title_height < 3 * line)
    ov.panel_width = 0;  // too small a picture: the model only
  return ov;
}

void draw_overlay(Image& image, const Overlay& ov, const RenderOptions& o, const PatchField& field,
                  double lo, double hi, const std::vector<std::size_t>& categories,
                  bool show_no_data) {
  const Rgb ink = text_colour(o.background);
  const int s = ov.scale, line = kLineHeight * s;
  if (ov.title_height > 0)
    draw_text(image, ov.pad, ov.pad, fit_text(o.title, image.width - 2 * ov.pad, s), ink, s);
  if (ov.panel_width == 0) return;

  const int x0 = image.width - ov.panel_width + ov.pad;
  const int width = ov.panel_width - 2 * ov.pad;
  int y = ov.title_height + ov.pad;
  for (const std::string& l : heading(field, width, s)) {
    draw_text(image, x0, y, l, ink, s);
    y += line;
  }
  y += line / 2;
  const int bottom_limit = image.height - ov.pad - (show_no_data ? line + ov.pad : 0);

  if (!o.categories.empty()) {
    // Legend: a swatch and a name per category, as many as fit.
    const int swatch = 7 * s;
    for (std::size_t i = 0; i < categories.size(); ++i) {
      if (y + 2 * line > bottom_limit && i + 1 < categories.size()) {
        draw_text(image, x0, y, "+" + std::to_string(categories.size() - i) + " more", ink, s);
        y += line;
        break;
      }
      fill(image, x0, y, x0 + swatch, y + swatch, to_rgb(category_colour(categories[i])));
      frame(image, x0, y, x0 + swatch, y + swatch, 1, ink);
      draw_text(image, x0 + swatch + 2 * s + 1, y,
                fit_text(category_name(o, categories[i]), width - swatch - 2 * s - 1, s), ink, s);
      y += line;
    }
  } else {
    // Colour bar, low at the bottom, with five labelled ticks.
    const BarGeometry g = bar_geometry(s);
    const int view_height = image.height - ov.title_height;
    const int top = y;
    const int bottom = std::min(bottom_limit - line / 2, top + view_height * 3 / 4);
    if (bottom - top >= 4 * line) {
      for (int yy = top; yy <= bottom; ++yy) {
        const double t = double(bottom - yy) / double(bottom - top);
        fill(image, x0, yy, x0 + g.bar_width, yy + 1, to_rgb(sequential_colour(t)));
      }
      frame(image, x0, top, x0 + g.bar_width, bottom + 1, 1, ink);
      const std::vector<std::string> labels = tick_labels(lo, hi, 5);
      for (int k = 0; k < 5; ++k) {
        const int ty = bottom - int(std::lround(k * (bottom - top) / 4.0));
        fill(image, x0 + g.bar_width, ty - s / 2, x0 + g.bar_width + g.tick_length, ty - s / 2 + s,
             ink);
        draw_text(image, x0 + g.bar_width + g.tick_length + g.gap, ty - (7 * s) / 2,
                  labels[std::size_t(k)], ink, s);
      }
      y = bottom + line / 2 + ov.pad;
    }
  }
  if (show_no_data) {
    const int swatch = 7 * s;
    const int yy = std::max(y, image.height - ov.pad - swatch);
    fill(image, x0, yy, x0 + swatch, yy + swatch, to_rgb(kNoDataColour));
    frame(image, x0, yy, x0 + swatch, yy + swatch, 1, ink);
    draw_text(image, x0 + swatch + 2 * s + 1, yy, "no data", ink, s);
  }
}

}  // namespace hearthray::render_detail
