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

namespace {

// Least-significant-digit radix sort of keys below `bound`, in passes of at most 11 bits;
// std::sort for short lists.
template <class Key>
void radix_sort(std::vector<Key>& v, std::vector<Key>& scratch, std::uint64_t bound) {
  if (v.size() < 64) {
    std::sort(v.begin(), v.end());
    return;
  }
  const int max_bits = int(8 * sizeof(Key));
  int bits = 1;
  while (bits < max_bits && (std::uint64_t{1} << bits) < bound) ++bits;
  const int passes = (bits + 10) / 11;  // digits of at most 11 bits
  const int digit = (bits + passes - 1) / passes;
  const Key mask = (Key{1} << digit) - 1;
  std::uint32_t count[(1u << 11) + 1];
  scratch.resize(v.size());
  for (int pass = 0; pass < passes; ++pass) {
    const int shift = pass * digit;
    std::fill(count, count + mask + 2, 0u);
    for (Key x : v) ++count[((x >> shift) & mask) + 1];
    for (Key d = 1; d <= mask + 1; ++d) count[d] += count[d - 1];
    for (Key x : v) scratch[count[(x >> shift) & mask]++] = x;
    v.swap(scratch);
  }
}

}  // namespace

void sort_patches(std::vector<std::uint32_t>& v, std::vector<std::uint32_t>& scratch,
                  std::size_t n_patches) {
  radix_sort(v, scratch, n_patches);
}

void sort_keys(std::vector<std::uint64_t>& v, std::vector<std::uint64_t>& scratch,
               std::uint64_t bound) {
  radix_sort(v, scratch, bound);
}

HitCounter::HitCounter(const PatchLookup& lookup)
    : lookup_(&lookup),
      hits_on_surface_(lookup.surface_count(), 0),
      back_face_hits_on_surface_(lookup.surface_count(), 0) {}

HitTally HitCounter::take() {
  HitTally out;
  take(&out);
  return out;
}

void HitCounter::take(HitTally* out) {
  out->patch.clear();
  out->count.clear();
  out->square.clear();
  out->escaped_square = out->back_face_square = 0;
  drain(
      [out](std::uint32_t q, std::uint64_t c) {
        out->patch.push_back(q);
        out->count.push_back(c);
      },
      out);
}

}  // namespace hearthray
