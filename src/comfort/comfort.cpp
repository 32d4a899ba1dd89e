// Comfort points and their angle factors by rays (see include/hearthray/comfort.hpp).
#include "hearthray/comfort.hpp"

#include <tbb/enumerable_thread_specific.h>
#include <tbb/info.h>
#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>

#include <algorithm>
#include <cmath>

#include "core/text.hpp"
#include "factors/hit_counter.hpp"
#include "hearthray/error.hpp"
#include "hearthray/sampling.hpp"

namespace hearthray {
namespace {

// Distinct from the view-factor streams: the same seed must not give a comfort point the
// random numbers of a patch.
constexpr std::uint64_t kComfortStream = 0xc0f0a7b1e5eed5ull;
constexpr std::size_t kEstimators = 7;  // the body, then the six planes
constexpr std::size_t kBatch = 4096;
// Rejection sampling of a person's directions accepts at least ~75 % of candidates; after this
// many refusals (probability below 1e-38) the last candidate is taken.
constexpr std::uint64_t kMaxAttempts = 64;

// Projected-area factors of Fanger's charts at altitude 0 and 90 degrees (recalled from
// memory, see comfort.hpp): f_p(beta) = a cos(beta) + b |sin(beta)|.
struct BodyShape {
  double a, b;
};
BodyShape shape(ComfortBody body) {
  switch (body) {
    case ComfortBody::standing:
      return {0.30, 0.08};
    case ComfortBody::seated:
      return {0.25, 0.20};
    default:
      return {1.0, 1.0};  // the sphere: handled apart (weight 1 in every direction)
  }
}

std::string metres(const Vec3& p) {
  return "(" + rounded("%.3g", p.x) + ", " + rounded("%.3g", p.y) + ", " + rounded("%.3g", p.z) +
         ") m";
}

Vec3 uniform_sphere(double u1, double u2) {
  const double z = 1 - 2 * u1;
  const double r = std::sqrt(std::max(0.0, 1 - z * z));
  double s, c;
  sincos_2pi(u2, &s, &c);
  return {r * c, r * s, z};
}

const std::array<Vec3, 6> kPlaneNormals = {Vec3{1, 0, 0},  Vec3{-1, 0, 0}, Vec3{0, 1, 0},
                                           Vec3{0, -1, 0}, Vec3{0, 0, 1},  Vec3{0, 0, -1}};

// Direction of ray `index` of estimator `e` (0 the body, 1..6 the planes).
Vec3 direction(ComfortBody body, std::size_t e, std::uint64_t key, std::uint64_t index) {
  if (e == 0) {
    if (body == ComfortBody::sphere) {
      const auto u = ray_uniforms(key, index);
      return uniform_sphere(u[0], u[1]);
    }
    const double max = body_density_max(body);
    Vec3 d;
    for (std::uint64_t k = 0; k < kMaxAttempts; ++k) {
      const auto u = ray_uniforms(key, index * kMaxAttempts + k);
      d = uniform_sphere(u[0], u[1]);
      if (u[2] * max < projected_area_weight(body, d.z)) break;
    }
    return d;
  }
  const auto u = ray_uniforms(key, index);
  const Vec3 local = sample_cosine_hemisphere(u[0], u[1]);
  const Vec3& n = kPlaneNormals[e - 1];
  Vec3 t, b;
  orthonormal_basis(n, &t, &b);
  return t * local.x + b * local.y + n * local.z;
}

// Per-thread scratch: the hit counter and one batch of rays.
struct Scratch {
  explicit Scratch(const PatchLookup& lookup) : counter(lookup), rays(kBatch), hits(kBatch) {}
  HitCounter counter;
  std::vector<Ray> rays;
  std::vector<RayHit> hits;
};

DirectionTally trace_one(const Tracer& tracer, const ComfortPoint& point, std::size_t point_index,
                         std::size_t e, const AngleFactorOptions& options, Scratch& s) {
  const std::uint64_t key =
      patch_stream_key(options.seed ^ kComfortStream, point_index * kEstimators + e);
  const Vec3 origin = point.position - tracer.centre();
  for (std::uint64_t first = 0; first < options.rays; first += kBatch) {
    const std::size_t n = std::size_t(std::min<std::uint64_t>(kBatch, options.rays - first));
    for (std::size_t i = 0; i < n; ++i) {
      const Vec3 d = direction(point.body, e, key, first + i);
      Ray& r = s.rays[i];
      r = Ray{};
      r.org[0] = float(origin.x), r.org[1] = float(origin.y), r.org[2] = float(origin.z);
      r.dir[0] = float(d.x), r.dir[1] = float(d.y), r.dir[2] = float(d.z);
    }
    tracer.trace(s.rays.data(), s.hits.data(), n);
    for (std::size_t i = 0; i < n; ++i) s.counter.add(s.hits[i]);
  }
  HitTally hits = s.counter.take();
  DirectionTally tally;
  tally.rays = options.rays;
  tally.escaped = hits.escaped;
  tally.back_face = hits.back_face;
  tally.patch = std::move(hits.patch);
  tally.count = std::move(hits.count);
  return tally;
}

}  // namespace

double projected_area_weight(ComfortBody body, double sin_beta) {
  if (body == ComfortBody::sphere) return 1;
  const BodyShape f = shape(body);
  return f.a * std::sqrt(std::max(0.0, 1 - sin_beta * sin_beta)) + f.b * std::abs(sin_beta);
}

double body_density_max(ComfortBody body) {
  if (body == ComfortBody::sphere) return 1;
  const BodyShape f = shape(body);
  return std::hypot(f.a, f.b);
}

double DirectionTally::factor(std::uint32_t p) const {
  const auto it = std::lower_bound(patch.begin(), patch.end(), p);
  if (it == patch.end() || *it != p || rays == 0) return 0;
  return double(count[std::size_t(it - patch.begin())]) / double(rays);
}

double DirectionTally::lost() const {
  return rays ? double(escaped + back_face) / double(rays) : 0;
}

double factor_to_surface(const DirectionTally& t, const PatchSet& patches, std::uint32_t surface) {
  std::uint64_t hits = 0;
  for (std::size_t k = 0; k < t.patch.size(); ++k) {
    if (patches.patches[t.patch[k]].surface == surface) hits += t.count[k];
  }
  return t.rays ? double(hits) / double(t.rays) : 0;
}

bool AngleFactorOptions::IsValid(std::string* error) const {
  if (rays < 1) {
    if (error) *error = "AngleFactorOptions::rays must be at least 1";
    return false;
  }
  if (threads < 0) {
    if (error) *error = "AngleFactorOptions::threads must be >= 0";
    return false;
  }
  return true;
}

std::vector<ComfortPoint> comfort_points(const Scene& scene, const ComfortInput& input) {
  const Box3& box = scene.bounds;
  std::vector<ComfortPoint> points;
  for (const ComfortPointSpec& spec : input.points) {
    const Vec3& p = spec.position;
    const bool inside = p.x > box.lo.x && p.x < box.hi.x && p.y > box.lo.y && p.y < box.hi.y &&
                        p.z > box.lo.z && p.z < box.hi.z;
    if (!inside) {
      throw InputError("[comfort.point." + spec.name + "] (line " + std::to_string(spec.line) +
                       ") position " + metres(p) + " is outside the mesh, which spans " +
                       metres(box.lo) + " to " + metres(box.hi));
    }
    points.push_back({spec.name, p, spec.body});
  }
  if (input.grid) {
    const ComfortGridSpec& g = *input.grid;
    const double z = box.lo.z + g.height;
    if (!(g.height > 0) || !(z < box.hi.z)) {
      throw InputError("[comfort.grid] height " + std::to_string(g.height) +
                       " m must be above the floor and below the top of the mesh (" +
                       std::to_string(box.hi.z - box.lo.z) + " m)");
    }
    auto axis = [&](double lo, double hi, const char* name) {
      const double length = hi - lo - 2 * g.margin;
      if (!(length >= 0)) {
        throw InputError("[comfort.grid] margin " + std::to_string(g.margin) +
                         " m leaves no room along " + name + " (the mesh is " +
                         std::to_string(hi - lo) + " m long there)");
      }
      const int n = int(std::floor(length / g.spacing + 1e-9)) + 1;
      if (n > 1000)
        throw InputError("[comfort.grid] spacing gives over 1000 points along " +
                         std::string(name) + ": give a larger spacing");
      std::vector<double> at(std::size_t(n), 0.0);
      const double start = 0.5 * (lo + hi) - 0.5 * (n - 1) * g.spacing;
      for (int i = 0; i < n; ++i) at[std::size_t(i)] = start + i * g.spacing;
      return at;
    };
    const std::vector<double> xs = axis(box.lo.x, box.hi.x, "x");
    const std::vector<double> ys = axis(box.lo.y, box.hi.y, "y");
    for (std::size_t j = 0; j < ys.size(); ++j) {
      for (std::size_t i = 0; i < xs.size(); ++i) {
        ComfortPoint p;
        p.name = "grid_" + std::to_string(i + 1) + "_" + std::to_string(j + 1);
        p.position = {xs[i], ys[j], z};
        p.body = g.body;
        p.grid_i = int(i);
        p.grid_j = int(j);
        points.push_back(p);
      }
    }
  }
  return points;
}

std::vector<PointFactors> trace_angle_factors(const Scene& scene, const PatchSet& patches,
                                              const Tracer& tracer,
                                              const std::vector<ComfortPoint>& points,
                                              const AngleFactorOptions& options) {
  std::string error;
  if (!options.IsValid(&error)) throw InputError(error);
  const PatchLookup lookup(scene, patches);
  std::vector<PointFactors> out(points.size());
  tbb::enumerable_thread_specific<Scratch> scratch([&] { return Scratch(lookup); });
  const int threads = options.threads > 0 ? options.threads : tbb::info::default_concurrency();
  tbb::task_arena arena(threads);
  arena.execute([&] {
    tbb::parallel_for(std::size_t(0), points.size() * kEstimators, [&](std::size_t task) {
      const std::size_t k = task / kEstimators, e = task % kEstimators;
      DirectionTally t = trace_one(tracer, points[k], k, e, options, scratch.local());
      if (e == 0) {
        out[k].body = std::move(t);
      } else {
        out[k].plane[e - 1] = std::move(t);
      }
    });
  });
  return out;
}

}  // namespace hearthray
