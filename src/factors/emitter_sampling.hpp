// Rays of the emitting patches: origins uniform over a patch's area, stratified along its
// triangle list, and cosine-weighted directions, each ray a pure function of (seed, patch,
// ray index) so that results do not depend on how the rays are split among threads.
//
// Sampler sobol: ray k of replicate r (rays [first_r, first_{r+1})) is the scrambled Sobol'
// point j = k - first_r of that replicate's seeds (sobol.hpp), in four dimensions u0..u3.
// u0 picks the point along the patch's triangle list by area (inverse of the cumulative
// area: a piecewise linear, increasing map, so an interval of u0 of length L covers a
// fraction L of the patch's area), and its position inside the chosen triangle together with
// u1 places the point by Heitz's map (area-preserving); u2, u3 give the direction by Malley's
// map (r = sqrt(u2), phi = 2 pi u3: a box of (u2, u3) maps to an annular sector of the disk
// of the same relative area, i.e. the same projected solid angle). Each map sends an
// elementary interval of [0,1)^4 to a piece of (area x projected solid angle) of the same
// measure, so the net's stratification carries over to the rays.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/sobol.hpp"
#include "hearthray/tracer.hpp"
#include "hearthray/view_factors.hpp"

namespace hearthray {

class EmitterSampler {
 public:
  // `centre`: origin of the tracer's frame (Tracer::centre()).
  EmitterSampler(const Scene& scene, const PatchSet& patches, const Vec3& centre,
                 std::uint64_t seed, EmissionSampler sampler = EmissionSampler::stratified);

  // A walk through the rays of one patch, which emits `total` rays in all, from ray `first`
  // on. Rays are drawn in ascending index order: the stratum walk only moves forward.
  struct Cursor {
    std::uint32_t patch = 0;
    std::uint64_t total = 0;
    std::uint64_t key = 0;                         // the patch's random stream
    std::uint32_t triangle = 0, triangle_end = 0;  // current position in the triangle list
    std::uint64_t replicate_first = 0;             // sobol: first ray of the cursor's replicate
    OwenSeeds seeds{};                             // sobol: the replicate's scrambling
  };
  Cursor start(std::uint32_t patch, std::uint64_t total, std::uint64_t first) const;

  // Rays [first, first + count) of the cursor's patch, in the tracer's frame, and the origin
  // offset of each (the distance its origin was lifted off the surface).
  void sample(Cursor& cursor, std::uint64_t first, std::size_t count, Ray* rays,
              float* offset) const;

  // Sampler sobol: the scrambled points (32-bit fractions in four dimensions) of the rays
  // [first, last) of the cursor's replicate, made one from the next in Gray-code order (one
  // exclusive-or per dimension), and put in an order that walks the patch's triangle list (by
  // the first coordinate, which picks the place along the list), so that a patch of many
  // triangles is traced with coherent origins as the stratified sampler's are. Hits are
  // counted, so the order changes no result. A one-triangle patch keeps the natural order.
  struct SobolPoint {
    std::uint32_t x[kSobolDimensions];
  };
  void sobol_points(const Cursor& cursor, std::uint64_t first, std::uint64_t last,
                    std::vector<SobolPoint>* points, std::vector<SobolPoint>* scratch,
                    std::vector<std::uint32_t>* buckets) const;

  // Sampler sobol: the rays of the given points, as sample().
  void sample_points(Cursor& cursor, const SobolPoint* points, std::size_t count, Ray* rays,
                     float* offset) const;

  // Everything the sampler needs of a triangle, in float as the rays are.
  struct TriangleFrame {
    float v0[3], e1[3], e2[3];
    float n[3], t[3], b[3];  // right-handed frame, n the front normal
    float offset;            // origin offset along the normal against self-hits
  };

 private:
  // One ray from a point of the patch's triangle list (u0 in [0,1) by area), u1 the second
  // coordinate on the triangle, (u2, u3) the direction. `triangle`: where in the list the
  // previous ray was (the search starts there), updated to this ray's.
  void emit(std::uint32_t patch, float sign, double u0, double u1, double u2, double u3,
            std::uint32_t* triangle, Ray* ray, float* offset) const;
  void sample_sobol(Cursor& cursor, std::uint64_t first, std::size_t count, Ray* rays,
                    float* offset) const;

  const PatchSet* patches_;
  std::uint64_t seed_;
  EmissionSampler sampler_;
  std::vector<TriangleFrame> frames_;  // per scene triangle
  // Along each patch's triangle list: cumulative area, and 1 / the triangle's area.
  std::vector<double> cumulative_, inverse_area_;
};

// The first index a in [b, e) with c[a] > x (e if none) of the ascending c, as
// std::upper_bound finds it, but searched outwards from `hint` (in [b, e)) in steps that
// double: rays drawn in sobol_order land near the previous one, and a patch of many triangles
// then costs a few comparisons per ray, not a binary search over its whole list.
std::uint32_t upper_bound_near(const double* c, std::uint32_t b, std::uint32_t e, double x,
                               std::uint32_t hint);

// A back-face hit within a few offsets of the origin is not radiation arriving anywhere (the
// sampled point rounded onto the plane of a neighbour meeting the emitter at an edge): traces
// on from just past it. Defined in view_factors.cpp.
void trace_past_edge_neighbour(const Tracer& tracer, float offset, Ray& ray, RayHit& hit);

}  // namespace hearthray
