// Private to the library: lines against a common x axis (time series, error against rays),
// drawn on the one canvas with round ticks, light grid lines, a legend and a title.
#pragma once

#include <string>
#include <vector>

#include "hearthray/picture.hpp"
#include "hearthray/render.hpp"
#include "pictures/canvas.hpp"

namespace hearthray::pictures {

struct ChartSeries {
  std::string name;
  std::vector<double> x, y;  // a NaN y breaks the line
  Colour colour{0, 0, 0};
  bool dashed = false;
  bool markers = false;  // a dot at each point (few points, e.g. measurements)
};

struct LineChart {
  std::string title, subtitle;   // subtitle: one line under the title, may be empty
  std::string x_label, y_label;  // with units, e.g. "time in h"
  std::vector<ChartSeries> series;
  int width = 960, height = 560;
  bool y_from_zero = false;  // the y axis starts at 0 (powers)
  // Logarithmic axes (errors against rays): ticks at the powers of ten (with 2 and 5 between
  // them over a range of under three decades); values <= 0 are left out.
  bool log_x = false, log_y = false;
};

Picture draw_line_chart(const LineChart& chart);

// The ticks of a logarithmic axis over [lo, hi] (log10 values): the powers of ten inside, and
// 2 and 5 times them when fewer than three decades are shown, every one labelled in one
// notation per axis: plain numbers ("0.002", "1000") when all lie within 0.001 .. 5000
// (1000 without the minor ticks), else powers of ten ("10⁻⁴", "2·10⁻⁴", "10⁴").
std::vector<Tick> log_ticks(double lo, double hi);

}  // namespace hearthray::pictures
