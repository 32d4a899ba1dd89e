// The one drawing layer of the pictures (render pictures and comfort maps); not a public
// header. A Canvas records Cairo drawing operations on a surface of fixed size; finish() turns
// the recording into a Picture that is written as PNG, SVG or PDF. Text is DejaVu Sans.
#pragma once

#include <array>
#include <string>
#include <vector>

#include "hearthray/picture.hpp"
#include "hearthray/render.hpp"

typedef struct _cairo cairo_t;
typedef struct _cairo_surface cairo_surface_t;

namespace hearthray::pictures {

enum class Align { left, centre, right };
enum class Weight { regular, bold };

struct FontMetrics {
  double ascent = 0, descent = 0, line = 0;  // pixels, for one font size
};

class Canvas {
 public:
  Canvas(int width, int height);
  ~Canvas();
  Canvas(const Canvas&) = delete;
  Canvas& operator=(const Canvas&) = delete;

  int width() const { return width_; }
  int height() const { return height_; }

  void fill_rect(double x, double y, double w, double h, const Colour& c);
  // Outline inside nothing: the stroke is centred on the rectangle's edge.
  void stroke_rect(double x, double y, double w, double h, double line_width, const Colour& c);
  void line(double x0, double y0, double x1, double y1, double line_width, const Colour& c);
  // Closed polygon, filled and/or stroked (line_width 0: no stroke).
  void polygon(const std::vector<std::array<double, 2>>& points, const Colour* fill,
               double line_width, const Colour& stroke);
  void circle(double x, double y, double radius, const Colour* fill, double line_width,
              const Colour& stroke);
  // A raster at (x, y), one image pixel per unit.
  void image(const Image& raster, double x, double y);
  // Vertical bar filled by colour(t), t = 0 at the bottom, 1 at the top (a smooth gradient).
  void vertical_gradient(double x, double y, double w, double h, Colour (*colour)(double));

  FontMetrics metrics(double size, Weight weight = Weight::regular) const;
  double text_width(const std::string& utf8, double size, Weight weight = Weight::regular) const;
  // Text with its baseline at y, aligned at x.
  void text(double x, double y, const std::string& utf8, double size, const Colour& c,
            Align align = Align::left, Weight weight = Weight::regular);

  // The finished drawing; the canvas is empty afterwards.
  Picture finish();

 private:
  void set_font(double size, Weight weight) const;
  int width_, height_;
  cairo_surface_t* surface_;
  cairo_t* cr_;
};

// Longest prefix of `utf8` (whole characters) that fits in `max_width`, with "…" when cut.
std::string fit_text(const Canvas& canvas, const std::string& utf8, double max_width, double size,
                     Weight weight = Weight::regular);
// Words of `utf8` wrapped into lines of at most `max_width` (a word longer than a line is cut).
std::vector<std::string> wrap_text(const Canvas& canvas, const std::string& utf8, double max_width,
                                   double size);

// Ticks of a colour bar: round values (1, 2, 2.5 or 5 times a power of ten apart) within
// [lo, hi], and their labels with the same number of decimals and a true minus sign (U+2212).
struct Tick {
  double value;
  std::string label;
};
std::vector<Tick> round_ticks(double lo, double hi, int most);
// A number as a label: `decimals` after the point, true minus sign, no "−0".
std::string format_number(double value, int decimals);

// A colour bar with its ticks on the right. `zero` marks the value 0 with a longer tick when
// it is inside the range. Returns the width used (bar, ticks and labels).
// `marks` are values drawn as a bold line across the bar with a label beyond the tick labels
// (e.g. a comfort limit, "limit 5 K").
struct BarMark {
  double value;
  std::string label;
};
struct ColourBar {
  double lo = 0, hi = 1;
  Colour (*colour)(double) = nullptr;
  bool mark_zero = false;
  std::vector<BarMark> marks;
};
double colour_bar_width(const Canvas& canvas, const ColourBar& bar, double font_size);
void draw_colour_bar(Canvas& canvas, const ColourBar& bar, double x, double top, double bottom,
                     double font_size, const Colour& ink);

// A legend entry: a square swatch and a name. Returns the height used.
double draw_swatch(Canvas& canvas, double x, double y, double font_size, const Colour& fill,
                   const Colour& ink, const std::string& name);

// A scale bar for a plan or section drawn at `ppm` pixels per metre: a round length (about a
// quarter of `span_m`, the drawing's width in metres), black and white halves, its left end
// at (x, y), "0" and the length in metres below it.
void draw_scale_bar(Canvas& canvas, double x, double y, double span_m, double ppm, double font_size,
                    const Colour& ink);

// "net radiative flux" -> "Net radiative flux" (the first letter capitalised, ASCII only).
std::string sentence_case(std::string text);

inline constexpr Colour kInk{0.14, 0.14, 0.14};      // text and lines
inline constexpr Colour kSoftInk{0.38, 0.38, 0.38};  // secondary text

}  // namespace hearthray::pictures
