// Private to the library: lines against a common x axis (time series, error against rays),
// drawn on the one canvas with round ticks, light grid lines, a legend and a title.
#pragma once

#include <string>
#include <vector>

#include "hearthray/picture.hpp"
#include "hearthray/render.hpp"

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
  // them over a short range), labelled 10ⁿ; values <= 0 are left out.
  bool log_x = false, log_y = false;
};

Picture draw_line_chart(const LineChart& chart);

}  // namespace hearthray::pictures
