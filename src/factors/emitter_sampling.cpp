#include "factors/emitter_sampling.hpp"

#include <algorithm>
#include <array>
#include <cmath>

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

// The ray from barycentric point `bc` of triangle frame `f` in local direction `d` (z along
// the normal, flipped by `sign` for a back side), lifted off the surface by the frame's offset.
inline void place_ray(const EmitterSampler::TriangleFrame& f, const Barycentric& bc, const Vec3& d,
                      float sign, Ray* ray, float* offset) {
  const float b1 = float(bc.b1), b2 = float(bc.b2);
  const float dx = float(d.x), dy = float(d.y), dz = float(d.z) * sign;
  for (int c = 0; c < 3; ++c) {
    ray->org[c] = f.v0[c] + b1 * f.e1[c] + b2 * f.e2[c] + sign * f.offset * f.n[c];
    ray->dir[c] = dx * f.t[c] + dy * f.b[c] + dz * f.n[c];
  }
  ray->tnear = 0;
  ray->tfar = 3.0e38f;
  *offset = f.offset;
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
  constexpr double k32 = 1.0 / 4294967296.0;
  for (std::size_t i = 0; i < count; ++i) {
    const std::uint32_t* x = points[i].x;
    emit(p, sign, double(x[0]) * k32, double(x[1]) * k32, double(x[2]) * k32, double(x[3]) * k32,
         &cursor.triangle, rays + i, offset + i);
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
    for (int d = 0; d < kSobolDimensions; ++d)
      made[i].x[d] = owen_scramble_reversed(x[d], cursor.seeds.s[d]);
  }
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
