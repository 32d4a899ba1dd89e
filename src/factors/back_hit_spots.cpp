// Where rays land on back faces (diagnostics.hpp): the view-factor sampler's rays from each
// surface side, traced on one thread (a sample for `check`, not a result).
#include <algorithm>
#include <map>

#include "core/text.hpp"
#include "factors/emitter_sampling.hpp"
#include "hearthray/diagnostics.hpp"
#include "hearthray/mesh_where.hpp"
#include "hearthray/tracer.hpp"

namespace hearthray {
namespace {

// What the sample found on one surface.
struct SpotTally {
  std::uint64_t hits = 0, arrivals = 0;
  std::map<std::uint32_t, std::uint64_t> by_triangle, by_sender;
  std::map<std::uint32_t, Vec3> sum_by_triangle;
  Box3 box;
  std::vector<Vec3> points;
};

BackHitSpot spot_of(std::uint32_t surface, const SpotTally& t) {
  BackHitSpot spot;
  spot.surface = surface;
  spot.hits = t.hits;
  spot.arrivals = t.arrivals;
  spot.box = t.box;
  spot.points = t.points;
  auto most = [](const std::map<std::uint32_t, std::uint64_t>& m) {
    return std::max_element(m.begin(), m.end(),
                            [](const auto& a, const auto& b) { return a.second < b.second; })
        ->first;
  };
  spot.from_surface = most(t.by_sender);
  const std::uint32_t triangle = most(t.by_triangle);
  spot.centre = t.sum_by_triangle.at(triangle) / double(t.by_triangle.at(triangle));
  return spot;
}

}  // namespace

std::vector<BackHitSpot> back_hit_spots(const Scene& scene, std::uint64_t rays_per_side,
                                        std::uint64_t seed) {
  const PatchSet patches = make_surface_patches(scene);
  const Tracer tracer(scene);
  const EmitterSampler sampler(scene, patches, tracer.centre(), seed);
  const Vec3 centre = tracer.centre();
  std::vector<SpotTally> tally(scene.surfaces.size());
  constexpr std::size_t kBatch = 256;
  std::vector<Ray> rays(kBatch);
  std::vector<RayHit> hits(kBatch);
  std::vector<float> offset(kBatch);
  for (std::uint32_t p = 0; p < patches.size(); ++p) {
    const std::uint32_t sender = patches.patches[p].surface;
    EmitterSampler::Cursor cursor = sampler.start(p, rays_per_side, 0);
    for (std::uint64_t k0 = 0; k0 < rays_per_side; k0 += kBatch) {
      const std::size_t m = std::size_t(std::min<std::uint64_t>(kBatch, rays_per_side - k0));
      sampler.sample(cursor, k0, m, rays.data(), offset.data());
      tracer.trace(rays.data(), hits.data(), m);
      for (std::size_t i = 0; i < m; ++i) {
        trace_past_edge_neighbour(tracer, offset[i], rays[i], hits[i]);
        const RayHit& h = hits[i];
        if (h.triangle == RayHit::kMiss) continue;
        SpotTally& t = tally[h.surface];
        ++t.arrivals;
        if (h.front || scene.surfaces[h.surface].two_sided) continue;
        const Ray& r = rays[i];
        const Vec3 at = centre + Vec3{r.org[0] + h.t * r.dir[0], r.org[1] + h.t * r.dir[1],
                                      r.org[2] + h.t * r.dir[2]};
        ++t.hits;
        ++t.by_triangle[h.triangle];
        ++t.by_sender[sender];
        t.sum_by_triangle[h.triangle] += at;
        t.box.grow(at);
        if (t.points.size() < 200) t.points.push_back(at);
      }
    }
  }
  std::vector<BackHitSpot> spots;
  for (std::uint32_t s = 0; s < tally.size(); ++s)
    if (tally[s].hits > 0) spots.push_back(spot_of(s, tally[s]));
  std::stable_sort(spots.begin(), spots.end(),
                   [](const BackHitSpot& a, const BackHitSpot& b) { return a.hits > b.hits; });
  return spots;
}

std::string back_hit_sentence(const Scene& scene, const BackHitSpot& b) {
  return "'" + scene.surfaces[b.surface].name +
         "': " + percent(double(b.hits) / double(b.arrivals)) +
         " of the rays reaching it, most near " + point_text(b.centre) + " (all between " +
         point_text(b.box.lo) + " and " + point_text(b.box.hi) + "), most sent by '" +
         scene.surfaces[b.from_surface].name + "'";
}

}  // namespace hearthray
