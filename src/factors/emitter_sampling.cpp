#include "factors/emitter_sampling.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdint>

#include "hearthray/sampling.hpp"

namespace hearthray {
namespace {

// Offset of ray origins from the surface, relative to the size of the coordinates (not to
// an absolute length), so self-hits are avoided the same way at any scale: float rounding of
// the sampled point and of Embree's hit distance is ~1e-7 of the coordinates, and the offset
// 2^-16 ~ 1.5e-5 of them leaves a margin of about 100. Coordinates are taken in the tracer's
// frame (centred on the scene), so the offset follows the scene's size, not its position.
constexpr double kRelativeOffset = 1.0 / 65536.0;

std::vector<EmitterSampler::TriangleFrame> make_frames(const Scene& scene, const Vec3& centre) {
  std::vector<EmitterSampler::TriangleFrame> frames(scene.triangles.size());
  const double floor = scene.bounds.diagonal() / 1024;  // only guards against a zero offset
  for (std::size_t i = 0; i < scene.triangles.size(); ++i) {
    const Triangle& tri = scene.triangles[i];
    const Vec3 a = scene.vertices[tri.v[0]] - centre;
    const Vec3 b = scene.vertices[tri.v[1]] - centre;
    const Vec3 c = scene.vertices[tri.v[2]] - centre;
    const Vec3 n = normalized(cross(b - a, c - a));
    Vec3 t, bt;
    orthonormal_basis(n, &t, &bt);
    double scale = floor;
    for (const Vec3* p : {&a, &b, &c})
      scale = std::max({scale, std::fabs(p->x), std::fabs(p->y), std::fabs(p->z)});
    EmitterSampler::TriangleFrame& f = frames[i];
    const Vec3 e1 = b - a, e2 = c - a;
    for (int k = 0; k < 3; ++k) {
      f.v0[k] = float(a[k]);
      f.e1[k] = float(e1[k]);
      f.e2[k] = float(e2[k]);
      f.n[k] = float(n[k]);
      f.t[k] = float(t[k]);
      f.b[k] = float(bt[k]);
    }
    f.offset = float(kRelativeOffset * scale);
  }
  return frames;
}

// The ray's origin at barycentric point `bc` of frame `f`, lifted off the surface, and its
// direction turned from the local one already in ray->dir (z along the normal, times `sign`).
inline void place_origin(const EmitterSampler::TriangleFrame& f, const Barycentric& bc, float sign,
                         Ray* ray, float* offset) {
  const float b1 = float(bc.b1), b2 = float(bc.b2);
  const float dx = ray->dir[0], dy = ray->dir[1], dz = ray->dir[2];
  for (int c = 0; c < 3; ++c) {
    ray->org[c] = f.v0[c] + b1 * f.e1[c] + b2 * f.e2[c] + sign * f.offset * f.n[c];
    ray->dir[c] = dx * f.t[c] + dy * f.b[c] + dz * f.n[c];
  }
  ray->tnear = 0;
  ray->tfar = 3.0e38f;
  *offset = f.offset;
}

// The ray from barycentric point `bc` of triangle frame `f` in local direction `d` (z along
// the normal, flipped by `sign` for a back side), lifted off the surface by the frame's offset.
inline void place_ray(const EmitterSampler::TriangleFrame& f, const Barycentric& bc, const Vec3& d,
                      float sign, Ray* ray, float* offset) {
  ray->dir[0] = float(d.x);
  ray->dir[1] = float(d.y);
  ray->dir[2] = float(d.z) * sign;
  place_origin(f, bc, sign, ray, offset);
}

// double(v) / 2^32, through a signed conversion (v - 2^31 is exact in int32 and the sum back
// exact in double) because SSE2 and AVX2 convert only signed integers to double.
inline double fraction32(std::uint32_t v) {
  return (double(std::int32_t(v ^ 0x80000000u)) + 2147483648.0) * (1.0 / 4294967296.0);
}

// The local direction of every point (z along the normal, times `sign`), put in the rays'
// dir for place_origin to turn into the triangle's frame: sample_cosine_hemisphere's
// arithmetic on (x[2], x[3]) (the inline sincos_2pi, then the square roots) written without
// lookups or branches so that the loop is vectorised; every operation is the same, so every
// bit is. The file is compiled
// with -fno-math-errno and -fno-trapping-math (CMakeLists.txt): sqrt's errno branch and
// selects between doubles would otherwise keep the loops here from being vectorised.
[[gnu::target_clones("avx2", "default")]] void local_directions(
    const EmitterSampler::SobolPoint* points, std::size_t count, float sign, Ray* rays) {
  for (std::size_t i = 0; i < count; ++i) {
    const double u1 = fraction32(points[i].x[2]), u2 = fraction32(points[i].x[3]);
    double sine, cosine;
    sincos_2pi(u2, &sine, &cosine);
    const double r = std::sqrt(static_cast<float>(u1));
    const double z = std::sqrt(static_cast<float>(1.0 - u1));  // = max(0, 1 - u1): u1 < 1
    rays[i].dir[0] = float(r * cosine);
    rays[i].dir[1] = float(r * sine);
    rays[i].dir[2] = float(z) * sign;
  }
}

// owen_scramble_reversed of every coordinate of the points, in place: a loop of integer
// arithmetic that the compiler vectorises (kept apart from the Gray-code walk, which is serial).
[[gnu::target_clones("avx2", "default")]] void scramble_points(EmitterSampler::SobolPoint* points,
                                                               std::size_t count,
                                                               const OwenSeeds& seeds) {
  const OwenSeeds local = seeds;
  for (std::size_t i = 0; i < count; ++i) {
    for (int d = 0; d < kSobolDimensions; ++d)
      points[i].x[d] = owen_scramble_reversed(points[i].x[d], local.s[d]);
  }
}

// The rays of points on a patch of one triangle (frame f, area and 1 / area) whose local
// directions local_directions left in the rays: EmitterSampler::emit's arithmetic for that
// case, with the clamps and the triangle map's select written as ternaries the compiler turns
// into min, max and blends, so that the loop is vectorised; the same bits.
[[gnu::target_clones("avx2", "default")]] void one_triangle_rays(
    const EmitterSampler::SobolPoint* points, std::size_t count,
    const EmitterSampler::TriangleFrame& frame, double area, double inverse, float sign, Ray* rays,
    float* offset) {
  const EmitterSampler::TriangleFrame f = frame;
  for (std::size_t i = 0; i < count; ++i) {
    const double u0 = fraction32(points[i].x[0]), u1 = fraction32(points[i].x[1]);
    double r = u0 * area * inverse;
    r = r < 0.0 ? 0.0 : r;                  // std::max(r, 0.0)
    r = 1.0 - 1e-16 < r ? 1.0 - 1e-16 : r;  // std::min(r, 1 - 1e-16)
    // sample_triangle_uniform(r, u1)
    const bool lower = r < u1;
    const double h1 = 0.5 * r, h2 = 0.5 * u1;
    place_origin(f, Barycentric{lower ? h1 : r - h2, lower ? u1 - h1 : h2}, sign, rays + i,
                 offset + i);
  }
}

}  // namespace

EmitterSampler::EmitterSampler(const Scene& scene, const PatchSet& patches, const Vec3& centre,
                               std::uint64_t seed, EmissionSampler sampler)
    : patches_(&patches),
      seed_(seed),
      sampler_(sampler),
      frames_(make_frames(scene, centre)),
      cumulative_(patches.triangle_index.size()),
      inverse_area_(patches.triangle_index.size()) {
  for (std::uint32_t p = 0; p < patches.size(); ++p) {
    double sum = 0;
    for (std::uint32_t k = patches.triangle_offset[p]; k < patches.triangle_offset[p + 1]; ++k) {
      const double area = scene.triangle_area(patches.triangle_index[k]);
      sum += area;
      cumulative_[k] = sum;
      inverse_area_[k] = 1.0 / area;
    }
  }
}

EmitterSampler::Cursor EmitterSampler::start(std::uint32_t patch, std::uint64_t total,
                                             std::uint64_t first) const {
  Cursor c;
  c.patch = patch;
  c.total = total;
  c.key = patch_stream_key(seed_, patch);
  const std::uint32_t t_begin = patches_->triangle_offset[patch];
  c.triangle_end = patches_->triangle_offset[patch + 1];
  if (sampler_ == EmissionSampler::sobol) {
    std::uint32_t r = 0;
    while (r + 1 < kSobolReplicates && replicate_first_ray(total, r + 1) <= first) ++r;
    c.replicate_first = replicate_first_ray(total, r);
    c.seeds = owen_seeds(mix64(c.key + (r + 1) * 0x3c6ef372fe94f82bull));
    c.triangle = t_begin;
    return c;
  }
  // First triangle of the stratum of ray `first`.
  const double area = cumulative_[c.triangle_end - 1];
  c.triangle = static_cast<std::uint32_t>(std::upper_bound(cumulative_.begin() + t_begin,
                                                           cumulative_.begin() + c.triangle_end,
                                                           area * double(first) / double(total)) -
                                          cumulative_.begin());
  c.triangle = std::min(c.triangle, c.triangle_end - 1);
  return c;
}

std::uint32_t upper_bound_near(const double* c, std::uint32_t b, std::uint32_t e, double x,
                               std::uint32_t hint) {
  std::uint32_t lo, hi, step = 1;
  if (c[hint] > x) {  // a <= hint
    hi = lo = hint;
    while (lo > b) {
      const std::uint32_t next = lo - std::min(step, lo - b);
      if (c[next] <= x) {
        lo = next + 1;
        break;
      }
      hi = lo = next;
      step *= 2;
    }
  } else {  // a > hint
    lo = hi = hint + 1;
    while (hi < e && c[hi] <= x) {
      lo = hi + 1;
      hi = std::min(e, hi + step);
      step *= 2;
    }
  }
  return std::uint32_t(std::upper_bound(c + lo, c + hi, x) - c);
}

void EmitterSampler::emit(std::uint32_t p, float sign, double u0, double u1, double u2, double u3,
                          std::uint32_t* triangle, Ray* ray, float* offset) const {
  const std::uint32_t t_begin = patches_->triangle_offset[p];
  const std::uint32_t t_end = patches_->triangle_offset[p + 1];
  const double target = u0 * cumulative_[t_end - 1];
  const std::uint32_t hint = std::min(std::max(*triangle, t_begin), t_end - 1);
  const std::uint32_t j =
      std::min(upper_bound_near(cumulative_.data(), t_begin, t_end, target, hint), t_end - 1);
  *triangle = j;
  const double below = j > t_begin ? cumulative_[j - 1] : 0.0;
  const double r = std::min(std::max((target - below) * inverse_area_[j], 0.0), 1.0 - 1e-16);
  place_ray(frames_[patches_->triangle_index[j]], sample_triangle_uniform(r, u1),
            sample_cosine_hemisphere(u2, u3), sign, ray, offset);
}

void EmitterSampler::sample_sobol(Cursor& cursor, std::uint64_t first, std::size_t count, Ray* rays,
                                  float* offset) const {
  const std::uint32_t p = cursor.patch;
  const float sign = patches_->patches[p].side == Side::back ? -1.0f : 1.0f;
  for (std::size_t i = 0; i < count; ++i) {
    const auto u = scrambled_sobol(std::uint32_t(first + i - cursor.replicate_first), cursor.seeds);
    emit(p, sign, u[0], u[1], u[2], u[3], &cursor.triangle, rays + i, offset + i);
  }
}

void EmitterSampler::sample_points(Cursor& cursor, const SobolPoint* points, std::size_t count,
                                   Ray* rays, float* offset) const {
  const std::uint32_t p = cursor.patch;
  const float sign = patches_->patches[p].side == Side::back ? -1.0f : 1.0f;
  const std::uint32_t t_begin = patches_->triangle_offset[p];
  const std::uint32_t t_end = patches_->triangle_offset[p + 1];
  constexpr double k32 = 1.0 / 4294967296.0;
  // Directions first, for every point of the run: arithmetic only, which the compiler
  // vectorises (the same operations as sample_cosine_hemisphere, so the same bits).
  local_directions(points, count, sign, rays);
  if (t_end - t_begin == 1) {  // one triangle: no lookup, one frame
    one_triangle_rays(points, count, frames_[patches_->triangle_index[t_begin]],
                      cumulative_[t_begin], inverse_area_[t_begin], sign, rays, offset);
    return;
  }
  const double area = cumulative_[t_end - 1];
  for (std::size_t i = 0; i < count; ++i) {
    const std::uint32_t* x = points[i].x;
    const double target = double(x[0]) * k32 * area;
    const std::uint32_t hint = std::min(std::max(cursor.triangle, t_begin), t_end - 1);
    const std::uint32_t j =
        std::min(upper_bound_near(cumulative_.data(), t_begin, t_end, target, hint), t_end - 1);
    cursor.triangle = j;
    const double below = j > t_begin ? cumulative_[j - 1] : 0.0;
    const double r = std::min(std::max((target - below) * inverse_area_[j], 0.0), 1.0 - 1e-16);
    place_origin(frames_[patches_->triangle_index[j]],
                 sample_triangle_uniform(r, double(x[1]) * k32), sign, rays + i, offset + i);
  }
}

void EmitterSampler::sobol_points(const Cursor& cursor, std::uint64_t first, std::uint64_t last,
                                  std::vector<SobolPoint>* points, std::vector<SobolPoint>* scratch,
                                  std::vector<std::uint32_t>* buckets) const {
  const std::size_t n = std::size_t(last - first);
  const bool walk = cursor.triangle_end - patches_->triangle_offset[cursor.patch] > 1;
  std::vector<SobolPoint>& made = walk ? *scratch : *points;
  made.resize(n);
  // Point j is point j - 1 with direction number ctz(j) added (sobol_point's Gray code), here
  // kept bit-reversed for the scramble.
  const SobolTable& table = sobol_table();
  std::uint32_t j = std::uint32_t(first - cursor.replicate_first);
  std::array<std::uint32_t, kSobolDimensions> x = sobol_point(j);
  for (std::uint32_t& r : x) r = reverse_bits32(r);
  for (std::size_t i = 0; i < n; ++i, ++j) {
    if (i > 0) {
      const int b = __builtin_ctz(j);
      for (int d = 0; d < kSobolDimensions; ++d) x[d] ^= table.reversed[d][b];
    }
    for (int d = 0; d < kSobolDimensions; ++d) made[i].x[d] = x[d];
  }
  scramble_points(made.data(), n, cursor.seeds);
  if (!walk) return;
  // A counting sort on the leading bits of the first coordinate: about one ray per bucket,
  // enough to walk the list (the order inside a bucket does not matter).
  int bits = 1;
  while (bits < 16 && (std::size_t{1} << bits) < n) ++bits;
  std::vector<std::uint32_t>& start = *buckets;
  start.assign((std::size_t{1} << bits) + 1, 0);
  for (const SobolPoint& q : made) ++start[(q.x[0] >> (32 - bits)) + 1];
  for (std::size_t k = 1; k < start.size(); ++k) start[k] += start[k - 1];
  points->resize(n);
  for (const SobolPoint& q : made) (*points)[start[q.x[0] >> (32 - bits)]++] = q;
}

void EmitterSampler::sample(Cursor& cursor, std::uint64_t first, std::size_t count, Ray* rays,
                            float* offset) const {
  if (sampler_ == EmissionSampler::sobol) return sample_sobol(cursor, first, count, rays, offset);
  const std::uint32_t p = cursor.patch;
  const float sign = patches_->patches[p].side == Side::back ? -1.0f : 1.0f;
  const std::uint32_t t_begin = patches_->triangle_offset[p];
  const std::uint32_t t_end = cursor.triangle_end;
  const double step = cumulative_[t_end - 1] / double(cursor.total);  // area per stratum
  std::uint32_t j = cursor.triangle;
  for (std::size_t i = 0; i < count; ++i) {
    const std::uint64_t k = first + i;
    const auto u = ray_uniforms(cursor.key, k);
    // Stratum k of the patch's area, walked in triangle order (coherent origins).
    const double target = (double(k) + u[0]) * step;
    while (j + 1 < t_end && cumulative_[j] <= target) ++j;
    const double below = j > t_begin ? cumulative_[j - 1] : 0.0;
    const double r = std::min(std::max((target - below) * inverse_area_[j], 0.0), 1.0 - 1e-16);
    place_ray(frames_[patches_->triangle_index[j]], sample_triangle_uniform(r, u[1]),
              sample_cosine_hemisphere(u[2], u[3]), sign, rays + i, offset + i);
  }
  cursor.triangle = j;
}

}  // namespace hearthray
