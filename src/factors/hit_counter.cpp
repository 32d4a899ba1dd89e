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

void sort_patches(std::vector<std::uint32_t>& v, std::vector<std::uint32_t>& scratch,
                  std::size_t n_patches) {
  if (v.size() < 64) {
    std::sort(v.begin(), v.end());
    return;
  }
  int bits = 1;
  while (bits < 32 && (std::uint64_t{1} << bits) < n_patches) ++bits;
  const int passes = (bits + 10) / 11;  // digits of at most 11 bits
  const int digit = (bits + passes - 1) / passes;
  const std::uint32_t mask = (1u << digit) - 1;
  std::uint32_t count[(1u << 11) + 1];
  scratch.resize(v.size());
  for (int pass = 0; pass < passes; ++pass) {
    const int shift = pass * digit;
    std::fill(count, count + mask + 2, 0u);
    for (std::uint32_t x : v) ++count[((x >> shift) & mask) + 1];
    for (std::uint32_t d = 1; d <= mask + 1; ++d) count[d] += count[d - 1];
    for (std::uint32_t x : v) scratch[count[(x >> shift) & mask]++] = x;
    v.swap(scratch);
  }
}

HitCounter::HitCounter(const PatchLookup& lookup)
    : lookup_(&lookup),
      count_(lookup.patch_count(), 0),
      hits_on_surface_(lookup.surface_count(), 0),
      back_face_hits_on_surface_(lookup.surface_count(), 0) {}

HitTally HitCounter::take() {
  HitTally out;
  take(&out);
  return out;
}

void HitCounter::take(HitTally* out) {
  sort_patches(touched_, sort_scratch_, count_.size());
  out->patch.clear();
  out->count.clear();
  out->square.clear();
  out->escaped = run_.escaped;
  out->back_face = run_.back_face;
  out->escaped_square = out->back_face_square = 0;
  run_.escaped = run_.back_face = 0;
  for (std::uint32_t q : touched_) {
    out->patch.push_back(q);
    out->count.push_back(count_[q]);
    count_[q] = 0;
  }
  touched_.clear();
}

}  // namespace hearthray
