// Pictures of the model: camera rays traced with the Tracer, flat per-patch colours, gentle
// view-angle shading and edges from a sub-pixel buffer make a raster of the model's part of
// the picture; the title and the colour bar (or category legend) are drawn over it as vectors
// (render_overlay.cpp). The model stays a traced raster rather than projected triangles: the
// Tracer decides visibility exactly as it does for the view factors (hidden surfaces, backs of
// one-sided surfaces passed through, interpenetrating parts), which Cairo's painter's order
// cannot, and a model of 100 000 patches stays a picture of fixed size in SVG and PDF.
#include "hearthray/render.hpp"

#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <set>

#include "hearthray/error.hpp"
#include "pictures/render_overlay.hpp"

namespace hearthray {

bool RenderOptions::IsValid(std::string* error) const {
  auto fail = [&](const std::string& message) {
    if (error) *error = message;
    return false;
  };
  if (width < 16 || width > 16384 || height < 16 || height > 16384)
    return fail("width and height must be between 16 and 16384 pixels");
  if (!(fov_degrees > 0 && fov_degrees < 179))
    return fail("fov_degrees must be between 0 and 179 degrees");
  if (!is_finite(up) || norm(up) == 0) return fail("up must be a finite, non-zero vector");
  if ((camera && !is_finite(*camera)) || (target && !is_finite(*target)))
    return fail("camera and target must be finite points");
  if (camera && target && norm(*camera - *target) == 0)
    return fail("camera and target must be different points");
  if ((range_min && !std::isfinite(*range_min)) || (range_max && !std::isfinite(*range_max)))
    return fail("range_min and range_max must be finite");
  if (range_min && range_max && !(*range_min < *range_max))
    return fail("range_min must be below range_max");
  if (!(shading >= 0 && shading <= 1)) return fail("shading must be between 0 and 1");
  if (supersampling < 1 || supersampling > 4) return fail("supersampling must be 1, 2, 3 or 4");
  if (threads < 0) return fail("threads must be 0 (all cores) or more");
  return true;
}

namespace {

constexpr std::uint32_t kBackground = 0xffffffffu;
constexpr int kMaxPassThrough = 64;  // faces a ray may pass before it is given up as background

struct Sample {
  std::uint32_t patch = kBackground;
  std::uint32_t triangle = 0;
  float t = std::numeric_limits<float>::infinity();
};

struct Camera {
  Vec3 eye, forward, right, up;  // eye in the scene frame; unit vectors
  double step = 0;               // sub-pixel size on the image plane at distance 1
  int columns = 0, rows = 0;     // sub-pixel grid
  Vec3 direction(int i, int j) const {
    return normalized(forward + right * ((i + 0.5 - 0.5 * columns) * step) +
                      up * ((0.5 * rows - j - 0.5) * step));
  }
};

// Right and up vectors for a view along `forward`, with `up_hint` kept as upright as possible.
void camera_basis(const Vec3& forward, const Vec3& up_hint, Vec3* right, Vec3* up) {
  Vec3 r = cross(forward, normalized(up_hint));
  if (norm(r) < 1e-6)
    r = cross(forward, std::fabs(forward.z) < 0.9 ? Vec3{0, 0, 1} : Vec3{0, 1, 0});
  *right = normalized(r);
  *up = cross(*right, forward);
}

// Camera for a view_w x view_h picture traced on a columns x rows grid. Without a camera
// position in the options, it looks along -`away` from the distance at which every corner of
// the bounding box lies inside the frame, with a small margin.
Camera make_camera(const Scene& scene, const RenderOptions& o, int view_w, int view_h,
                   const Vec3& away, int columns, int rows) {
  const Box3& box = scene.bounds;
  const Vec3 target = o.target ? *o.target : (box.lo + box.hi) * 0.5;
  const double tan_v = std::tan(0.5 * o.fov_degrees * 3.14159265358979323846 / 180.0);
  const double tan_h = tan_v * double(view_w) / double(view_h);
  Camera cam;
  if (o.camera) {
    cam.eye = *o.camera;
    cam.forward = normalized(target - cam.eye);
    camera_basis(cam.forward, o.up, &cam.right, &cam.up);
  } else {
    cam.forward = -away;
    camera_basis(cam.forward, o.up, &cam.right, &cam.up);
    double distance = 0, nearest = 0;
    for (int k = 0; k < 8; ++k) {
      const Vec3 c{k & 1 ? box.hi.x : box.lo.x, k & 2 ? box.hi.y : box.lo.y,
                   k & 4 ? box.hi.z : box.lo.z};
      const Vec3 rel = c - target;
      const double z = dot(rel, away);
      distance = std::max({distance, z + std::fabs(dot(rel, cam.right)) / (0.94 * tan_h),
                           z + std::fabs(dot(rel, cam.up)) / (0.94 * tan_v)});
      nearest = std::max(nearest, z);
    }
    distance = std::max({distance, nearest + 0.01 * box.diagonal(), 1e-9});
    cam.eye = target + away * distance;
  }
  cam.columns = columns;
  cam.rows = rows;
  cam.step = 2 * tan_v / rows;
  return cam;
}

// Traces one sub-pixel row range: first drawable face along each camera ray.
void trace_rows(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                const Camera& cam, const std::vector<char>& hidden, int row_begin, int row_end,
                Sample* out) {
  const Vec3 origin = cam.eye - tracer.centre();
  const std::size_t n = std::size_t(cam.columns) * std::size_t(row_end - row_begin);
  std::vector<Ray> rays(n);
  std::vector<RayHit> hits(n);
  std::vector<std::uint32_t> pending(n), next;
  for (std::size_t k = 0; k < n; ++k) {
    const int i = int(k % std::size_t(cam.columns)), j = row_begin + int(k / cam.columns);
    const Vec3 d = cam.direction(i, j);
    Ray& r = rays[k];
    r.org[0] = float(origin.x);
    r.org[1] = float(origin.y);
    r.org[2] = float(origin.z);
    r.dir[0] = float(d.x);
    r.dir[1] = float(d.y);
    r.dir[2] = float(d.z);
    pending[k] = std::uint32_t(k);
    out[k] = Sample{};
  }
  // Past a face, the ray starts again just beyond it (a step above float resolution).
  const float min_step = float(1e-7 * std::max(scene.bounds.diagonal(), norm(origin)));
  std::vector<Ray> batch(n);
  for (int pass = 0; pass < kMaxPassThrough && !pending.empty(); ++pass) {
    for (std::size_t k = 0; k < pending.size(); ++k) batch[k] = rays[pending[k]];
    tracer.trace(batch.data(), hits.data(), pending.size());
    next.clear();
    for (std::size_t k = 0; k < pending.size(); ++k) {
      const RayHit& h = hits[k];
      if (h.triangle == RayHit::kMiss) continue;
      const std::uint32_t patch = h.front ? patches.front_patch_of_triangle[h.triangle]
                                          : patches.back_patch_of_triangle[h.triangle];
      if (patch == PatchSet::kNoPatch || hidden[h.surface]) {
        rays[pending[k]].tnear = h.t + std::max(min_step, h.t * 4e-7f);
        next.push_back(pending[k]);
        continue;
      }
      out[pending[k]] = Sample{patch, h.triangle, h.t};
    }
    pending.swap(next);
  }
}

// Default view direction: from above and in front, as one looks at a furnace or a kiln (its
// door at the front), never from under the hearth. "Up" is the options' up vector (z by
// default); "front" is the side towards -y (towards +z when up is y, the usual OBJ frame).
// Of the two front views from above, front-right and front-left, the one in which more
// surfaces show (each on at least 0.5 % of a coarse probe picture); a tie goes to the right.
// To look at something from below (panels under a ceiling), give a camera position.
Vec3 default_direction(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                       const RenderOptions& o, const std::vector<char>& hidden, int view_w,
                       int view_h) {
  const Vec3 up = normalized(o.up);
  const Vec3 front_hint = std::fabs(up.y) > 0.9 ? Vec3{0, 0, 1} : Vec3{0, -1, 0};
  const Vec3 front = normalized(front_hint - up * dot(front_hint, up));
  const Vec3 right = cross(up, front);
  const int columns = 48;
  const int rows = std::max(4, int(std::lround(48.0 * view_h / view_w)));
  std::vector<Sample> probe(std::size_t(columns * rows));
  Vec3 best;
  std::size_t best_count = 0;
  for (const double side : {1.0, -1.0}) {
    const Vec3 away = normalized(right * side + front * 1.4 + up);
    const Camera cam = make_camera(scene, o, view_w, view_h, away, columns, rows);
    trace_rows(scene, patches, tracer, cam, hidden, 0, rows, probe.data());
    // A surface counts when it covers at least 0.5 % of the probe.
    std::vector<std::size_t> covered(scene.surfaces.size(), 0);
    for (const Sample& s : probe)
      if (s.patch != kBackground) ++covered[patches.patches[s.patch].surface];
    std::size_t count = 0;
    for (std::size_t c : covered) count += c * 200 >= probe.size();
    if (norm(best) == 0 || count > best_count) {
      best = away;
      best_count = count;
    }
  }
  return best;
}

// Edge kinds of a sub-pixel.
constexpr std::uint8_t kSurfaceEdge = 1;  // another surface or the background is next to it
constexpr std::uint8_t kDepthEdge = 2;    // the same surface, but far behind (an overlap)
constexpr std::uint8_t kPatchEdge = 4;    // another patch of the same surface

struct ColourRange {
  double lo = 0, hi = 1;
};

// The range of the colour map: the field's finite extremes unless given; for a diverging map
// symmetric about zero; never empty.
ColourRange colour_range(const PatchField& field, const RenderOptions& o) {
  double lo = std::numeric_limits<double>::infinity(), hi = -lo;
  for (double v : field.values) {
    if (!std::isfinite(v)) continue;
    lo = std::min(lo, v);
    hi = std::max(hi, v);
  }
  if (!(lo <= hi)) lo = hi = 0;
  if (o.diverging) {
    const double m = std::max(std::fabs(lo), std::fabs(hi));
    lo = -m;
    hi = m;
  }
  if (o.range_min) lo = *o.range_min;
  if (o.range_max) hi = *o.range_max;
  if (!(lo < hi)) {  // one value only, or one given end beyond the data
    const double pad = std::max({std::fabs(lo), std::fabs(hi), 1e-300}) * 0.05;
    const double width = (lo == 0 && hi == 0) ? 1.0 : pad;
    if (o.range_min && !o.range_max) {
      hi = lo + 2 * width;
    } else if (o.range_max && !o.range_min) {
      lo = hi - 2 * width;
    } else {
      const double middle = lo;
      lo = middle - width;
      hi = middle + width;
    }
  }
  return {lo, hi};
}

std::vector<char> hidden_surfaces(const Scene& scene, const RenderOptions& options) {
  std::vector<char> hidden(scene.surfaces.size(), 0);
  for (const std::string& name : options.hidden) {
    const int s = scene.find_surface(name);
    if (s < 0) {
      std::string known;
      for (const std::string& n : scene.surface_names()) known += (known.empty() ? "" : ", ") + n;
      throw InputError("cannot hide surface '" + name + "': the model has " + known);
    }
    hidden[std::size_t(s)] = 1;
  }
  return hidden;
}

// Colour of each patch, whether it has a value, and the categories present.
struct PatchColours {
  std::vector<Colour> colour;
  std::vector<char> has_value;
  std::vector<std::size_t> categories;
};

PatchColours patch_colours(const PatchField& field, const RenderOptions& o,
                           const ColourRange& range) {
  const bool categorical = !o.categories.empty();
  const std::size_t n = field.values.size();
  PatchColours pc{std::vector<Colour>(n), std::vector<char>(n), {}};
  std::set<std::size_t> used;
  for (std::size_t p = 0; p < n; ++p) {
    const double v = field.values[p];
    pc.has_value[p] = std::isfinite(v) && (!categorical || (v >= 0 && v < 1e9));
    if (!pc.has_value[p]) {
      pc.colour[p] = kNoDataColour;
    } else if (categorical) {
      const auto k = std::size_t(std::llround(v));
      used.insert(k);
      pc.colour[p] = category_colour(k);
    } else {
      const double t = (v - range.lo) / (range.hi - range.lo);
      pc.colour[p] = o.diverging ? diverging_colour(t) : sequential_colour(t);
    }
  }
  pc.categories.assign(used.begin(), used.end());
  return pc;
}

// The traced view: the first drawable face of every sub-pixel, and its edge kinds.
struct View {
  Camera cam;
  std::vector<Sample> samples;
  std::vector<std::uint8_t> edge;
  const Sample& at(int i, int j) const {
    return samples[std::size_t(j) * std::size_t(cam.columns) + std::size_t(i)];
  }
};

// Edge kinds of sub-pixel row j. Each boundary between two sub-pixels is drawn on the nearer
// one, so a silhouette darkens the object and not the background. Patch edges are drawn only
// between patches large enough on screen (about 12 x 12 pixels) for the lines not to crowd.
void find_edges(const Scene& scene, const PatchSet& patches, View& view, int j,
                const std::vector<std::uint32_t>& coverage, std::uint32_t min_coverage) {
  const Camera& cam = view.cam;
  auto surface_of = [&](const Sample& s) {
    return s.patch == kBackground ? kBackground : patches.patches[s.patch].surface;
  };
  for (int i = 0; i < cam.columns; ++i) {
    const Sample& s = view.at(i, j);
    if (s.patch == kBackground) continue;
    const Vec3 normal = scene.normal(s.triangle);
    const Vec3 p = cam.direction(i, j) * double(s.t);
    const double footprint = 2.0 * double(s.t) * cam.step;
    std::uint8_t kind = 0;
    static constexpr int kDi[4] = {1, -1, 0, 0}, kDj[4] = {0, 0, 1, -1};
    for (int k = 0; k < 4; ++k) {
      const int ni = i + kDi[k], nj = j + kDj[k];
      if (ni < 0 || nj < 0 || ni >= cam.columns || nj >= cam.rows) continue;
      const Sample& n = view.at(ni, nj);
      if (n.patch == s.patch && n.triangle == s.triangle) continue;
      const bool nearer = s.t < n.t || (s.t == n.t && k % 2 == 0);
      if (!nearer) continue;
      if (surface_of(n) != surface_of(s)) {
        kind |= kSurfaceEdge;
      } else if (std::fabs(dot(normal, cam.direction(ni, nj) * double(n.t) - p)) > footprint) {
        kind |= kDepthEdge;
      } else if (n.patch != s.patch && coverage[s.patch] >= min_coverage &&
                 coverage[n.patch] >= min_coverage) {
        kind |= kPatchEdge;
      }
    }
    view.edge[std::size_t(j) * std::size_t(cam.columns) + std::size_t(i)] = kind;
  }
}

View trace_view(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                const RenderOptions& o, const std::vector<char>& hidden, int view_w, int view_h,
                tbb::task_arena& arena) {
  const int ss = o.supersampling;
  const Vec3 away =
      o.camera ? Vec3{} : default_direction(scene, patches, tracer, o, hidden, view_w, view_h);
  View view;
  view.cam = make_camera(scene, o, view_w, view_h, away, view_w * ss, view_h * ss);
  const std::size_t columns = std::size_t(view.cam.columns);
  view.samples.resize(columns * std::size_t(view.cam.rows));
  view.edge.assign(view.samples.size(), 0);
  arena.execute([&] {  // one pixel row (ss sub-pixel rows) per task
    tbb::parallel_for(0, view_h, [&](int y) {
      trace_rows(scene, patches, tracer, view.cam, hidden, y * ss, (y + 1) * ss,
                 &view.samples[std::size_t(y * ss) * columns]);
    });
  });
  std::vector<std::uint32_t> coverage(patches.size(), 0);  // sub-pixels of each patch
  for (const Sample& s : view.samples)
    if (s.patch != kBackground) ++coverage[s.patch];
  const auto min_coverage = std::uint32_t(150 * ss * ss);
  arena.execute([&] {
    tbb::parallel_for(0, view.cam.rows,
                      [&](int j) { find_edges(scene, patches, view, j, coverage, min_coverage); });
  });
  return view;
}

// The model's raster: colours averaged over each pixel's sub-pixels. Sets *no_data when a
// patch without a value shows.
Image shade(const Scene& scene, const View& view, const PatchColours& pc, const RenderOptions& o,
            tbb::task_arena& arena, bool* no_data) {
  const int ss = o.supersampling;
  Image image;
  image.width = view.cam.columns / ss;
  image.height = view.cam.rows / ss;
  image.rgb.resize(3 * std::size_t(image.width) * std::size_t(image.height));
  std::vector<std::uint8_t> row_no_data(std::size_t(image.height), 0);
  const Colour bg{o.background.r / 255.0, o.background.g / 255.0, o.background.b / 255.0};
  auto sub_pixel = [&](int i, int j, int y) {
    const Sample& s = view.at(i, j);
    if (s.patch == kBackground) return bg;
    if (!pc.has_value[s.patch]) row_no_data[std::size_t(y)] = 1;
    const double cosine = std::fabs(dot(scene.normal(s.triangle), view.cam.direction(i, j)));
    double f = 1 - o.shading * (1 - cosine);
    const std::uint8_t e = o.edges ? view.edge[std::size_t(j) * view.cam.columns + i] : 0;
    if (e & (kSurfaceEdge | kDepthEdge))
      f *= 0.3;
    else if (e & kPatchEdge)
      f *= 0.7;
    const Colour& c = pc.colour[s.patch];
    return Colour{f * c.r, f * c.g, f * c.b};
  };
  arena.execute([&] {
    tbb::parallel_for(0, image.height, [&](int y) {
      for (int x = 0; x < image.width; ++x) {
        Colour sum;
        for (int j = y * ss; j < (y + 1) * ss; ++j) {
          for (int i = x * ss; i < (x + 1) * ss; ++i) {
            const Colour c = sub_pixel(i, j, y);
            sum.r += c.r, sum.g += c.g, sum.b += c.b;
          }
        }
        const double w = 255.0 / double(ss * ss);
        std::uint8_t* px = &image.rgb[3 * (std::size_t(y) * image.width + std::size_t(x))];
        px[0] = std::uint8_t(std::lround(std::clamp(sum.r * w, 0.0, 255.0)));
        px[1] = std::uint8_t(std::lround(std::clamp(sum.g * w, 0.0, 255.0)));
        px[2] = std::uint8_t(std::lround(std::clamp(sum.b * w, 0.0, 255.0)));
      }
    });
  });
  *no_data = std::any_of(row_no_data.begin(), row_no_data.end(), [](std::uint8_t v) { return v; });
  return image;
}

}  // namespace

Vec3 default_view_direction(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                            const RenderOptions& options) {
  std::string problem;
  if (!options.IsValid(&problem)) throw InputError("picture options: " + problem);
  return default_direction(scene, patches, tracer, options, hidden_surfaces(scene, options),
                           options.width, options.height);
}

Picture render(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
               const PatchField& field, const RenderOptions& options) {
  std::string problem;
  if (!options.IsValid(&problem)) throw InputError("picture options: " + problem);
  check_field(field, patches);
  const std::vector<char> hidden = hidden_surfaces(scene, options);
  if (options.camera && !options.target &&
      norm(*options.camera - (scene.bounds.lo + scene.bounds.hi) * 0.5) == 0)
    throw InputError(
        "picture options: the camera is at the centre of the model, the point it "
        "looks at by default; give a target");

  const ColourRange range = colour_range(field, options);
  const PatchColours pc = patch_colours(field, options, range);
  render_detail::Panel panel;
  panel.field = &field;
  panel.bar = {range.lo,
               range.hi,
               options.diverging ? diverging_colour : sequential_colour,
               options.diverging,
               {}};
  panel.categorical = !options.categories.empty();
  panel.categories = pc.categories;

  pictures::Canvas canvas(options.width, options.height);
  const render_detail::Layout layout = render_detail::plan_layout(canvas, options, panel);
  const int view_w = options.width - layout.panel_width;
  const int view_h = options.height - layout.title_height;
  tbb::task_arena arena(options.threads > 0 ? options.threads : tbb::task_arena::automatic);
  const View view = trace_view(scene, patches, tracer, options, hidden, view_w, view_h, arena);
  bool no_data = false;
  const Image model = shade(scene, view, pc, options, arena, &no_data);

  canvas.image(model, 0, layout.title_height);
  render_detail::draw_overlay(canvas, layout, options, panel, no_data);
  return canvas.finish();
}

}  // namespace hearthray
