// Counting where traced rays land, shared by the view-factor tracer and the comfort tracer:
// the patch a hit belongs to, and per-patch counters whose totals cost O(patches touched) to
// read out, not O(patches).
#pragma once

#include <cstdint>
#include <vector>

#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/tracer.hpp"

namespace hearthray {

// The patch a hit lands in. Where a surface side is one patch (the usual case) the surface,
// which the tracer reports without a memory lookup, settles it; otherwise the triangle does.
class PatchLookup {
 public:
  PatchLookup(const Scene& scene, const PatchSet& patches);

  // The receiving patch of a hit (not a miss): PatchSet::kNoPatch on the back of a
  // one-sided surface.
  std::uint32_t patch_of(const RayHit& hit) const {
    const std::uint32_t q = hit.front ? surface_front_[hit.surface] : surface_back_[hit.surface];
    if (q != kByTriangle) return q;
    return hit.front ? patches_->front_patch_of_triangle[hit.triangle]
                     : patches_->back_patch_of_triangle[hit.triangle];
  }
  std::size_t patch_count() const { return patches_->size(); }
  std::size_t surface_count() const { return surface_front_.size(); }

 private:
  static constexpr std::uint32_t kByTriangle = 0xfffffffeu;
  const PatchSet* patches_;
  std::vector<std::uint32_t> surface_front_, surface_back_;  // per surface: patch or kByTriangle
};

// What one run of rays (a chunk of an emitter's rays, one comfort direction) arrived at.
struct HitTally {
  std::vector<std::uint32_t> patch;  // receiving patches, ascending
  std::vector<std::uint64_t> count;  // rays that arrived at each
  std::uint64_t escaped = 0;         // rays that hit nothing
  std::uint64_t back_face = 0;       // rays absorbed on the back of a one-sided surface
  // A whole view-factor row traced with the sobol sampler: per receiver, and for the escaped
  // and back-face rays, the sum over the replicates of (c_r / M_r)^2 in replicate order.
  std::vector<double> square;
  double escaped_square = 0, back_face_square = 0;
};

// Sorts `v` (patch indices below `n_patches`) ascending: a radix sort of two or three passes
// over the few hundred receivers of a row, several times cheaper than a comparison sort there.
// `scratch` is working space.
void sort_patches(std::vector<std::uint32_t>& v, std::vector<std::uint32_t>& scratch,
                  std::size_t n_patches);
// The same radix sort for 64-bit keys below `bound`.
void sort_keys(std::vector<std::uint64_t>& v, std::vector<std::uint64_t>& scratch,
               std::uint64_t bound);

// One thread's counter of ray arrivals. A run's receivers are appended to a short list, one
// entry per ray, and sorted and counted when the run is taken: no per-patch array is touched
// per ray, so the counting does not evict the tracer's acceleration structure from the cache
// (dense per-patch counters, 8 bytes per patch, did at ~100k patches). Runs of rays are
// counted one after another (add ..., take); the per-surface totals run over every ray the
// counter has seen.
class HitCounter {
 public:
  explicit HitCounter(const PatchLookup& lookup);

  void add(const RayHit& hit) {
    if (hit.triangle == RayHit::kMiss) {
      ++run_.escaped;
      return;
    }
    ++hits_on_surface_[hit.surface];
    const std::uint32_t q = lookup_->patch_of(hit);
    if (q == PatchSet::kNoPatch) {
      ++run_.back_face;
      ++back_face_hits_on_surface_[hit.surface];
      return;
    }
    arrivals_.push_back(q);
  }

  // The tally of the rays added since the last take (patches ascending); the next run starts
  // from zero.
  HitTally take();
  // The same into `out`, whose vectors keep their capacity (no allocation once warm).
  void take(HitTally* out);

  // The same tally without allocating once warm: calls f(patch, count) for each patch the run
  // reached, patches ascending, and returns the run's escaped and back-face rays in `rest`;
  // the next run starts from zero.
  template <class F>
  void drain(F&& f, HitTally* rest) {
    sort_patches(arrivals_, sort_scratch_, lookup_->patch_count());
    const std::size_t n = arrivals_.size();
    for (std::size_t i = 0; i < n;) {
      const std::uint32_t q = arrivals_[i];
      std::size_t j = i + 1;
      while (j < n && arrivals_[j] == q) ++j;
      f(q, std::uint64_t(j - i));
      i = j;
    }
    arrivals_.clear();
    rest->escaped = run_.escaped;
    rest->back_face = run_.back_face;
    run_.escaped = run_.back_face = 0;
  }

  // The run unsorted and uncounted: calls f(patch) for each ray that reached a patch, in
  // tracing order, and returns the run's escaped and back-face rays in `rest`; the next run
  // starts from zero.
  template <class F>
  void drain_arrivals(F&& f, HitTally* rest) {
    for (std::uint32_t q : arrivals_) f(q);
    arrivals_.clear();
    rest->escaped = run_.escaped;
    rest->back_face = run_.back_face;
    run_.escaped = run_.back_face = 0;
  }

  std::size_t patch_count() const { return lookup_->patch_count(); }

  // Over every ray added: arrivals (front and back) per surface, and back-face arrivals.
  const std::vector<std::uint64_t>& hits_on_surface() const { return hits_on_surface_; }
  const std::vector<std::uint64_t>& back_face_hits_on_surface() const {
    return back_face_hits_on_surface_;
  }

 private:
  const PatchLookup* lookup_;
  std::vector<std::uint32_t> arrivals_;  // the receiving patch of each ray of the run
  std::vector<std::uint32_t> sort_scratch_;
  HitTally run_;  // escaped and back_face of the current run
  std::vector<std::uint64_t> hits_on_surface_, back_face_hits_on_surface_;
};

}  // namespace hearthray
