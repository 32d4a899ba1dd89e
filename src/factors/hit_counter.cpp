#include "factors/hit_counter.hpp"

#include <algorithm>

namespace hearthray {

PatchLookup::PatchLookup(const Scene& scene, const PatchSet& patches)
    : patches_(&patches),
      surface_front_(scene.surfaces.size()),
      surface_back_(scene.surfaces.size()) {
  for (std::uint32_t s = 0; s < scene.surfaces.size(); ++s) {
    const Surface& surface = scene.surfaces[s];
    const std::uint32_t t0 = surface.first_triangle, t1 = t0 + surface.triangle_count;
    surface_front_[s] = t1 > t0 ? patches.front_patch_of_triangle[t0] : PatchSet::kNoPatch;
    surface_back_[s] = t1 > t0 ? patches.back_patch_of_triangle[t0] : PatchSet::kNoPatch;
    for (std::uint32_t t = t0; t < t1; ++t) {
      if (patches.front_patch_of_triangle[t] != surface_front_[s]) surface_front_[s] = kByTriangle;
      if (patches.back_patch_of_triangle[t] != surface_back_[s]) surface_back_[s] = kByTriangle;
    }
  }
}

HitCounter::HitCounter(const PatchLookup& lookup)
    : lookup_(&lookup),
      count_(lookup.patch_count(), 0),
      hits_on_surface_(lookup.surface_count(), 0),
      back_face_hits_on_surface_(lookup.surface_count(), 0) {}

HitTally HitCounter::take() {
  HitTally out = std::move(run_);
  run_ = HitTally{};
  std::sort(touched_.begin(), touched_.end());
  out.patch.reserve(touched_.size());
  out.count.reserve(touched_.size());
  for (std::uint32_t q : touched_) {
    out.patch.push_back(q);
    out.count.push_back(count_[q]);
    count_[q] = 0;
  }
  touched_.clear();
  return out;
}

}  // namespace hearthray
