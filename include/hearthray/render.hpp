// Pictures of the model coloured by a per-patch quantity: one camera ray per sub-pixel traced
// with the Tracer, flat colour per patch through a perceptually uniform colour map, gentle
// shading by the angle to the view, thin dark edges where the surface changes (all in a
// raster of the model's part of the picture), then composed with a title, a colour bar with
// round tick values and the quantity with its unit (or a legend) drawn as vectors. Written as
// PNG, SVG or PDF (see picture.hpp).
//
// What is drawn: a ray that meets a face from a side that is no patch (the back of a one-sided
// surface) or a face of a hidden surface goes on past it, so an enclosure whose normals point
// inward is seen into from outside, and a roof or door can be cut away. The back of a
// two-sided surface is its back patch, and is drawn with that patch's value.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "hearthray/fields.hpp"
#include "hearthray/geometry.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/picture.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/tracer.hpp"

namespace hearthray {

struct RenderOptions {
  int width = 800;  // pixels, the whole picture (colour bar and title included)
  int height = 600;
  // Camera, in metres in the scene's frame. Without a position the camera looks at the target
  // from above and in front (from (+-1, -1.4, 1) for z up: front-right or front-left, whichever
  // shows more surfaces), at the distance that frames the model's bounding box; never from
  // below.
  std::optional<Vec3> camera;
  std::optional<Vec3> target;  // default: centre of the model's bounding box
  Vec3 up{0, 0, 1};
  double fov_degrees = 30;          // vertical field of view of the model's part of the picture
  std::vector<std::string> hidden;  // names of surfaces that rays pass through
  std::string title;                // top line; nothing when empty
  // Colour range; each end defaults to the field's finite extreme.
  std::optional<double> range_min, range_max;
  // Non-empty: the field holds category indices (e.g. surface numbers) coloured by a
  // qualitative palette and listed in a legend under these names, instead of a colour bar.
  std::vector<std::string> categories;
  // Signed quantities (a net flux): the diverging colour map, the range symmetric about zero
  // unless given, and zero marked on the colour bar.
  bool diverging = false;
  Rgb background{247, 247, 245};
  double shading = 0.25;  // darkening at grazing view, 0..1 (0: flat colours)
  bool edges = true;      // dark lines where the surface changes (patch, when patches are large)
  int supersampling = 2;  // rays per pixel along each axis, 1..4
  int threads = 0;        // 0 = all cores; the picture does not depend on it

  // False with a message naming the field and the constraint when an option is out of range.
  bool IsValid(std::string* error) const;
};

// The direction from the target to the camera that render() takes when no camera position is
// given (a unit vector).
Vec3 default_view_direction(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                            const RenderOptions& options);

// Throws InputError for invalid options, an unknown hidden surface or a field with the wrong
// number of values.
Picture render(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
               const PatchField& field, const RenderOptions& options);

// sRGB components in [0, 1].
struct Colour {
  double r = 0, g = 0, b = 0;
};
// The sequential colour map: t in [0, 1] (clamped) from ink blue through teal and sand to
// cream, with CIELAB lightness rising strictly and equal colour differences for equal steps
// of t.
Colour sequential_colour(double t);
// The diverging colour map for signed quantities: t = 0.5 (zero) is a light neutral grey; below
// it deep blue-green, above it deep copper-red, CIELAB lightness falling equally fast on both
// sides (equal colour differences for equal steps of t on each side).
Colour diverging_colour(double t);
// Qualitative palette for categories: distinct hues of similar lightness, repeating after
// kCategoryColours entries.
inline constexpr int kCategoryColours = 12;
Colour category_colour(std::size_t index);
// Colour of patches without a value.
inline constexpr Colour kNoDataColour{0.62, 0.62, 0.62};

}  // namespace hearthray
