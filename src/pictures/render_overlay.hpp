// The vector part of the render pictures (src/pictures/); not a public header: the title band
// at the top and the panel on the right (colour bar or category legend), drawn on a Canvas.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "hearthray/render.hpp"
#include "pictures/canvas.hpp"

namespace hearthray::render_detail {

// What the panel shows: the quantity and its colour bar, or the categories present.
struct Panel {
  const PatchField* field = nullptr;
  pictures::ColourBar bar;
  bool categorical = false;             // a legend of the categories instead of a colour bar
  std::vector<std::size_t> categories;  // those present
};

// Title band at the top and a panel on the right; the model fills the rest. Sizes scale with
// the picture.
struct Layout {
  double font = 13;      // font size of the panel, pixels
  double pad = 10;       // margin, pixels
  int title_height = 0;  // band at the top (0 without a title)
  int panel_width = 0;   // band on the right (0 when the picture is too small for one)
};
Layout plan_layout(const pictures::Canvas& canvas, const RenderOptions& options,
                   const Panel& panel);
// Background of the bands, the title and the panel; `show_no_data` adds the grey "no data" key.
void draw_overlay(pictures::Canvas& canvas, const Layout& layout, const RenderOptions& options,
                  const Panel& panel, bool show_no_data);

}  // namespace hearthray::render_detail
