// Title, colour bar and category legend of the render pictures, drawn as vectors.
#include "pictures/render_overlay.hpp"

#include <algorithm>
#include <cmath>

namespace hearthray::render_detail {
namespace {

using pictures::Align;
using pictures::Canvas;
using pictures::Weight;

constexpr int kMaxHeadingLines = 3;

Colour colour_of(const Rgb& c) {
  return {c.r / 255.0, c.g / 255.0, c.b / 255.0};
}

Colour ink_on(const Rgb& background) {
  const double luma = 0.2126 * background.r + 0.7152 * background.g + 0.0722 * background.b;
  return luma > 128 ? pictures::kInk : Colour{0.9, 0.9, 0.9};
}

double title_size(const Layout& l) {
  return 1.2 * l.font;
}

// The quantity's name in sentence case, wrapped into lines of at most `width`, then its unit.
std::vector<std::string> heading(const Canvas& canvas, const PatchField& field, double width,
                                 double size) {
  std::vector<std::string> lines =
      pictures::wrap_text(canvas, pictures::sentence_case(field.name), width, size);
  if (int(lines.size()) > kMaxHeadingLines) {
    lines.resize(kMaxHeadingLines);
    lines.back() = pictures::fit_text(canvas, lines.back() + " \u2026", width, size);
  }
  if (!field.unit.empty() && field.unit != "-")
    lines.push_back(pictures::fit_text(canvas, "in " + field.unit, width, size));
  return lines;
}

std::string category_name(const RenderOptions& o, std::size_t k) {
  return k < o.categories.size() ? o.categories[k] : "#" + std::to_string(k);
}

double swatch_offset(double font) {
  return 1.4 * font;
}

}  // namespace

Layout plan_layout(const Canvas& canvas, const RenderOptions& o, const Panel& panel) {
  Layout l;
  l.font = std::clamp(13.0 * std::min(o.width / 800.0, o.height / 600.0), 7.0, 48.0);
  l.pad = 0.8 * l.font;
  const double line = canvas.metrics(l.font).line;
  const double title_line = canvas.metrics(title_size(l), Weight::bold).line;
  if (!o.title.empty() && title_line + 2 * l.pad <= o.height / 4.0)
    l.title_height = int(std::ceil(title_line + 1.5 * l.pad));

  const double max_content = o.width * 0.4 - 2 * l.pad;
  double content = canvas.text_width("no data", l.font) + swatch_offset(l.font);
  if (panel.categorical) {
    for (std::size_t k : panel.categories)
      content =
          std::max(content, swatch_offset(l.font) + canvas.text_width(category_name(o, k), l.font));
  } else {
    content = std::max(content, pictures::colour_bar_width(canvas, panel.bar, l.font));
  }
  // The heading wraps rather than widen the panel, down to lines of about 14 characters.
  // A name a little wider than that stays on one line rather than leave one word on the next
  // ("Net radiative flux", not "Net radiative" over "flux").
  double wrap =
      std::min(max_content, std::max(content, canvas.text_width("Temperature in", l.font)));
  const double whole = canvas.text_width(pictures::sentence_case(panel.field->name), l.font);
  if (whole <= std::min(max_content, 1.5 * wrap)) wrap = std::max(wrap, whole);
  for (const std::string& s : heading(canvas, *panel.field, wrap, l.font))
    content = std::max(content, canvas.text_width(s, l.font));
  l.panel_width = int(std::ceil(std::min(content, max_content) + 2 * l.pad));
  if (o.width - l.panel_width < o.width / 2 || o.height - l.title_height < 4 * line)
    l.panel_width = 0;  // too small a picture: the model only
  return l;
}

void draw_overlay(Canvas& canvas, const Layout& l, const RenderOptions& o, const Panel& panel,
                  bool show_no_data) {
  const Colour background = colour_of(o.background), ink = ink_on(o.background);
  const int w = canvas.width(), h = canvas.height();
  canvas.fill_rect(0, 0, w, l.title_height, background);
  canvas.fill_rect(w - l.panel_width, l.title_height, l.panel_width, h - l.title_height,
                   background);
  if (l.title_height > 0) {
    const double size = title_size(l);
    canvas.text(l.pad, l.pad + canvas.metrics(size, Weight::bold).ascent,
                pictures::fit_text(canvas, o.title, w - 2 * l.pad, size, Weight::bold), size, ink,
                Align::left, Weight::bold);
  }
  if (l.panel_width == 0) return;

  const double x0 = w - l.panel_width + l.pad, width = l.panel_width - 2 * l.pad;
  const pictures::FontMetrics m = canvas.metrics(l.font);
  double y = l.title_height + l.pad;
  for (const std::string& s : heading(canvas, *panel.field, width, l.font)) {
    canvas.text(x0, y + m.ascent, s, l.font, ink);
    y += m.line;
  }
  y += 0.8 * l.font;
  const double bottom_limit = h - l.pad - (show_no_data ? 1.6 * l.font : 0);

  if (panel.categorical) {
    // Legend: a swatch and a name per category, as many as fit.
    const auto& cats = panel.categories;
    for (std::size_t i = 0; i < cats.size(); ++i) {
      if (y + 2 * m.line > bottom_limit && i + 1 < cats.size()) {
        canvas.text(x0, y + m.ascent, "+" + std::to_string(cats.size() - i) + " more", l.font, ink);
        y += m.line;
        break;
      }
      const std::string name = pictures::fit_text(canvas, category_name(o, cats[i]),
                                                  width - swatch_offset(l.font), l.font);
      y += pictures::draw_swatch(canvas, x0, y, l.font, category_colour(cats[i]), ink, name);
    }
  } else {
    // Colour bar, low at the bottom, with round tick values.
    const double top = y + 0.5 * l.font;
    const double bottom = std::min(bottom_limit - 0.8 * l.font, top + 0.75 * (h - l.title_height));
    if (bottom - top >= 4 * m.line) {
      pictures::draw_colour_bar(canvas, panel.bar, x0, top, bottom, l.font, ink);
      y = bottom + 0.8 * l.font;
    }
  }
  if (show_no_data) {
    const double yy = std::max(y, h - l.pad - 1.0 * l.font);
    pictures::draw_swatch(canvas, x0, yy, l.font, kNoDataColour, ink, "no data");
  }
}

}  // namespace hearthray::render_detail
