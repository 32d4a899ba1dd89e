// Pieces shared by the picture code (src/pictures/); not a public header.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "hearthray/render.hpp"

namespace hearthray::render_detail {

// Bitmap font of our own: glyph cells 5 x 9 pixels (7 above the baseline, 2 below) at scale 1,
// drawn with `scale` x `scale` blocks per font pixel.
inline constexpr int kGlyphWidth = 5;
inline constexpr int kGlyphHeight = 9;
inline constexpr int kAdvance = 6;      // glyph width plus one column of space
inline constexpr int kLineHeight = 11;  // glyph height plus two rows of space

// Width in pixels of UTF-8 text (characters without a glyph are drawn as '?').
int text_width(const std::string& utf8, int scale);
// Draws text with the top of its first line's cells at (x, y); clipped to the image.
void draw_text(Image& image, int x, int y, const std::string& utf8, Rgb colour, int scale);
// Longest prefix of `utf8` (whole characters) that fits in `max_width` pixels, with "..."
// when shortened.
std::string fit_text(const std::string& utf8, int max_width, int scale);

// Title band at the top and a panel on the right (colour bar or category legend); the model
// fills the rest. Sizes scale with the picture.
struct Overlay {
  int scale = 1;         // font scale
  int pad = 4;           // margin, pixels
  int title_height = 0;  // band at the top (0 without a title)
  int panel_width = 0;   // band on the right (0 when the picture is too small for one)
};
Overlay plan_overlay(const RenderOptions& options, const PatchField& field, double lo, double hi,
                     const std::vector<std::size_t>& categories);
// Draws the title and the panel; `show_no_data` adds the grey "no data" key.
void draw_overlay(Image& image, const Overlay& overlay, const RenderOptions& options,
                  const PatchField& field, double lo, double hi,
                  const std::vector<std::size_t>& categories, bool show_no_data);

// Labels for ticks at lo + k (hi - lo) / (count - 1): the fewest digits that show every tick
// within 1 % of the tick spacing.
std::vector<std::string> tick_labels(double lo, double hi, int count);

}  // namespace hearthray::render_detail
