// Pictures of the model: camera rays traced with the Tracer, flat per-patch colours, gentle
// view-angle shading, edges from a sub-pixel buffer, then the title and the colour bar (or
// category legend) drawn with the project's bitmap font.
#include "hearthray/render.hpp"

#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <set>

#include "hearthray/error.hpp"
#include "pictures/render_parts.hpp"

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

// Default view direction: of the eight diagonal views (+-1, +-1.4, +-1), the one in which the
// most surfaces show (each on at least 0.5 % of a coarse probe picture). Views from above are
// preferred: one from below must show two surfaces more; ties go to the first in the list,
// (1, -1.4, 1) first. A room with heating panels under its ceiling is thus seen from below,
// where the panels face; a kiln or a furnace from above.
Vec3 default_direction(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                       const RenderOptions& o, const std::vector<char>& hidden, int view_w,
                       int view_h) {
  static constexpr double kSigns[8][3] = {{1, -1, 1},  {-1, -1, 1},  {1, 1, 1},  {-1, 1, 1},
                                          {1, -1, -1}, {-1, -1, -1}, {1, 1, -1}, {-1, 1, -1}};
  const int columns = 48;
  const int rows = std::max(4, int(std::lround(48.0 * view_h / view_w)));
  std::vector<Sample> probe(std::size_t(columns * rows));
  Vec3 best;
  std::size_t best_count = 0;
  for (const auto& sign : kSigns) {
    const Vec3 away = normalized(Vec3{sign[0], 1.4 * sign[1], sign[2]});
    const Camera cam = make_camera(scene, o, view_w, view_h, away, columns, rows);
    trace_rows(scene, patches, tracer, cam, hidden, 0, rows, probe.data());
    // A surface counts when it covers at least 0.5 % of the probe.
    std::vector<std::size_t> covered(scene.surfaces.size(), 0);
    for (const Sample& s : probe)
      if (s.patch != kBackground) ++covered[patches.patches[s.patch].surface];
    std::size_t count = sign[2] > 0 ? 1 : 0;  // a view from below must show two more
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
  bool any = false;  // the field has finite values
};

ColourRange colour_range(const PatchField& field, const RenderOptions& o) {
  ColourRange r;
  double lo = std::numeric_limits<double>::infinity(), hi = -lo;
  for (double v : field.values) {
    if (!std::isfinite(v)) continue;
    lo = std::min(lo, v);
    hi = std::max(hi, v);
    r.any = true;
  }
  if (!r.any) lo = hi = 0;
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
  r.lo = lo;
  r.hi = hi;
  return r;
}

}  // namespace

Image render(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
             const PatchField& field, const RenderOptions& options) {
  std::string problem;
  if (!options.IsValid(&problem)) throw InputError("picture options: " + problem);
  check_field(field, patches);
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
  if (options.camera && !options.target &&
      norm(*options.camera - (scene.bounds.lo + scene.bounds.hi) * 0.5) == 0)
    throw InputError(
        "picture options: the camera is at the centre of the model, the point it "
        "looks at by default; give a target");

  // Colour of each patch.
  const bool categorical = !options.categories.empty();
  const ColourRange range = colour_range(field, options);
  std::vector<Colour> patch_colour(patches.size());
  std::vector<char> patch_has_value(patches.size());
  std::set<std::size_t> used_categories;
  for (std::size_t p = 0; p < patches.size(); ++p) {
    const double v = field.values[p];
    patch_has_value[p] = std::isfinite(v) && (!categorical || (v >= 0 && v < 1e9));
    if (!patch_has_value[p]) {
      patch_colour[p] = kNoDataColour;
    } else if (categorical) {
      const auto k = std::size_t(std::llround(v));
      used_categories.insert(k);
      patch_colour[p] = category_colour(k);
    } else {
      patch_colour[p] = sequential_colour((v - range.lo) / (range.hi - range.lo));
    }
  }
  const std::vector<std::size_t> categories(used_categories.begin(), used_categories.end());

  const render_detail::Overlay overlay =
      render_detail::plan_overlay(options, field, range.lo, range.hi, categories);
  const int view_w = options.width - overlay.panel_width;
  const int view_h = options.height - overlay.title_height;
  const int ss = options.supersampling;
  const Vec3 away =
      options.camera ? Vec3{}
                     : default_direction(scene, patches, tracer, options, hidden, view_w, view_h);
  const Camera cam = make_camera(scene, options, view_w, view_h, away, view_w * ss, view_h * ss);
  const std::size_t columns = std::size_t(cam.columns);

  std::vector<Sample> samples(columns * std::size_t(cam.rows));
  std::vector<std::uint8_t> edge(samples.size(), 0);
  std::vector<std::uint8_t> row_no_data(std::size_t(view_h), 0);
  // Sub-pixels each patch covers: patch edges are drawn only between patches large enough on
  // screen (about 12 x 12 pixels) for the lines not to crowd them.
  std::vector<std::uint32_t> coverage(patches.size(), 0);
  const std::uint32_t min_coverage = std::uint32_t(150 * ss * ss);
  Image image;
  image.width = options.width;
  image.height = options.height;
  image.rgb.resize(3 * std::size_t(image.width) * std::size_t(image.height));

  auto surface_of = [&](const Sample& s) {
    return s.patch == kBackground ? kBackground : patches.patches[s.patch].surface;
  };
  // Hit point of sub-pixel (i, j) relative to the eye.
  auto hit_point = [&](int i, int j, const Sample& s) { return cam.direction(i, j) * double(s.t); };

  tbb::task_arena arena(options.threads > 0 ? options.threads : tbb::task_arena::automatic);
  arena.execute([&] {
    // 1. Camera rays, one pixel row (ss sub-pixel rows) per task.
    tbb::parallel_for(0, view_h, [&](int y) {
      trace_rows(scene, patches, tracer, cam, hidden, y * ss, (y + 1) * ss,
                 &samples[std::size_t(y * ss) * columns]);
    });
  });
  for (const Sample& s : samples)
    if (s.patch != kBackground) ++coverage[s.patch];

  arena.execute([&] {
    // 2. Edges: each boundary between two sub-pixels is drawn on the nearer one, so a
    // silhouette darkens the object and not the background.
    tbb::parallel_for(0, view_h, [&](int y) {
      for (int j = y * ss; j < (y + 1) * ss; ++j) {
        for (int i = 0; i < cam.columns; ++i) {
          const Sample& s = samples[std::size_t(j) * columns + std::size_t(i)];
          if (s.patch == kBackground) continue;
          const Vec3 normal = scene.normal(s.triangle);
          const Vec3 p = hit_point(i, j, s);
          const double footprint = 2.0 * double(s.t) * cam.step;
          std::uint8_t kind = 0;
          static constexpr int kDi[4] = {1, -1, 0, 0}, kDj[4] = {0, 0, 1, -1};
          for (int k = 0; k < 4; ++k) {
            const int ni = i + kDi[k], nj = j + kDj[k];
            if (ni < 0 || nj < 0 || ni >= cam.columns || nj >= cam.rows) continue;
            const Sample& n = samples[std::size_t(nj) * columns + std::size_t(ni)];
            if (n.patch == s.patch && n.triangle == s.triangle) continue;
            const bool nearer = s.t < n.t || (s.t == n.t && k % 2 == 0);
            if (!nearer) continue;
            if (surface_of(n) != surface_of(s)) {
              kind |= kSurfaceEdge;
            } else if (std::fabs(dot(normal, hit_point(ni, nj, n) - p)) > footprint) {
              kind |= kDepthEdge;
            } else if (n.patch != s.patch && coverage[s.patch] >= min_coverage &&
                       coverage[n.patch] >= min_coverage) {
              kind |= kPatchEdge;
            }
          }
          edge[std::size_t(j) * columns + std::size_t(i)] = kind;
        }
      }
    });
  });

  const Colour bg{options.background.r / 255.0, options.background.g / 255.0,
                  options.background.b / 255.0};
  arena.execute([&] {
    // 3. Colours, averaged over each pixel's sub-pixels.
    tbb::parallel_for(0, view_h, [&](int y) {
      for (int x = 0; x < view_w; ++x) {
        double r = 0, g = 0, b = 0;
        for (int j = y * ss; j < (y + 1) * ss; ++j) {
          for (int i = x * ss; i < (x + 1) * ss; ++i) {
            const std::size_t k = std::size_t(j) * columns + std::size_t(i);
            const Sample& s = samples[k];
            if (s.patch == kBackground) {
              r += bg.r, g += bg.g, b += bg.b;
              continue;
            }
            if (!patch_has_value[s.patch]) row_no_data[std::size_t(y)] = 1;
            const double cosine = std::fabs(dot(scene.normal(s.triangle), cam.direction(i, j)));
            double f = 1 - options.shading * (1 - cosine);
            if (options.edges) {
              const std::uint8_t e = edge[k];
              if (e & (kSurfaceEdge | kDepthEdge))
                f *= 0.3;
              else if (e & kPatchEdge)
                f *= 0.7;
            }
            const Colour& c = patch_colour[s.patch];
            r += f * c.r, g += f * c.g, b += f * c.b;
          }
        }
        const double w = 255.0 / double(ss * ss);
        std::uint8_t* px =
            &image.rgb[3 * (std::size_t(y + overlay.title_height) * image.width + std::size_t(x))];
        px[0] = std::uint8_t(std::lround(std::clamp(r * w, 0.0, 255.0)));
        px[1] = std::uint8_t(std::lround(std::clamp(g * w, 0.0, 255.0)));
        px[2] = std::uint8_t(std::lround(std::clamp(b * w, 0.0, 255.0)));
      }
    });
  });

  // 4. Title band and right panel on the background colour.
  for (int y = 0; y < image.height; ++y) {
    for (int x = 0; x < image.width; ++x) {
      if (y >= overlay.title_height && x < view_w) continue;
      std::uint8_t* px = &image.rgb[3 * (std::size_t(y) * image.width + std::size_t(x))];
      px[0] = options.background.r;
      px[1] = options.background.g;
      px[2] = options.background.b;
    }
  }
  const bool no_data =
      std::any_of(row_no_data.begin(), row_no_data.end(), [](std::uint8_t v) { return v; });
  render_detail::draw_overlay(image, overlay, options, field, range.lo, range.hi, categories,
                              no_data);
  return image;
}

}  // namespace hearthray
