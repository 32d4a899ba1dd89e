// Raw Monte Carlo view factors F_ij = hits_ij / N_i straight from the tallies, and the
// binomial standard error of a factor. Also the consistency checks on tallies that every
// consumer of them relies on.
#include <tbb/blocked_range.h>
#include <tbb/parallel_for.h>
#include <tbb/parallel_reduce.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <string>

#include "factors/view_factors_check.hpp"
#include "hearthray/error.hpp"
#include "hearthray/statistics.hpp"
#include "hearthray/view_factors.hpp"

namespace hearthray {
namespace {

std::string patch_label(const PatchSet& patches, std::size_t p) {
  return "patch " + std::to_string(p) + " '" + patches.patches[p].name + "'";
}

}  // namespace

namespace tallies_detail {

namespace {

// What is wrong with row r of the tallies (whose arrays have matching sizes), or "".
std::string row_problem(const PatchSet& patches, const Tallies& t, std::size_t r) {
  const std::size_t n = patches.size();
  const std::size_t p = t.emitter_begin + r;
  if (t.rays[r] == 0) return patch_label(patches, p) + " emitted no rays; every patch needs rays";
  const std::uint64_t begin = t.hit_offset[r], end = t.hit_offset[r + 1];
  if (begin > end || end > t.hit_patch.size()) {
    return "view-factor tallies are inconsistent: hit offsets of " + patch_label(patches, p) +
           " are out of order";
  }
  std::uint64_t counted = t.escaped[r] + t.back_face[r];
  bool ordered = true;
  for (std::uint64_t k = begin; k < end; ++k) {
    ordered &= t.hit_patch[k] < n && (k == begin || t.hit_patch[k] > t.hit_patch[k - 1]);
    counted += t.hit_count[k];
  }
  if (!ordered) {
    return "view-factor tallies are inconsistent: the receivers of " + patch_label(patches, p) +
           " are out of range or not in ascending order";
  }
  if (counted > t.rays[r]) {
    return "view-factor tallies are inconsistent: " + patch_label(patches, p) + " has " +
           std::to_string(counted) + " counted rays but emitted only " + std::to_string(t.rays[r]);
  }
  return "";
}

}  // namespace

// Tallies come from trace_tallies or merge_shards (or a file, later): check the structure
// before indexing with it, so that a mismatch is a message instead of a crash.
void check_tallies(const PatchSet& patches, const Tallies& t) {
  const std::size_t n = patches.size();
  const std::size_t rows = t.rows();
  if (t.patch_count != n) {
    throw InputError("view-factor tallies are for " + std::to_string(t.patch_count) +
                     " patches but the scene has " + std::to_string(n) +
                     "; trace the same scene again");
  }
  if (static_cast<std::size_t>(t.emitter_begin) + rows > n) {
    throw InputError("view-factor tallies cover emitters " + std::to_string(t.emitter_begin) +
                     " to " + std::to_string(t.emitter_begin + rows) + " but the scene has " +
                     std::to_string(n) + " patches");
  }
  if (t.escaped.size() != rows || t.back_face.size() != rows || t.hit_offset.size() != rows + 1 ||
      t.hit_patch.size() != t.hit_count.size() || t.hit_offset.front() != 0 ||
      t.hit_offset.back() != t.hit_patch.size() ||
      (!t.hit_square.empty() &&
       (t.hit_square.size() != t.hit_count.size() || t.escaped_square.size() != rows ||
        t.back_face_square.size() != rows))) {
    throw InputError(
        "view-factor tallies are inconsistent: the per-row arrays (rays, escaped, back faces, "
        "hit offsets) and the hit lists do not have matching sizes");
  }
  // Rows checked in parallel (some 1e8 hits at 100k patches); the first bad row is told.
  const std::size_t first_bad = tbb::parallel_reduce(
      tbb::blocked_range<std::size_t>(0, rows, 512), rows,
      [&](const tbb::blocked_range<std::size_t>& range, std::size_t found) {
        for (std::size_t r = range.begin(); r != range.end() && r < found; ++r) {
          if (!row_problem(patches, t, r).empty()) return r;
        }
        return found;
      },
      [](std::size_t a, std::size_t b) { return std::min(a, b); });
  if (first_bad < rows) throw InputError(row_problem(patches, t, first_bad));
}

}  // namespace tallies_detail

namespace {

// Row r's replicate standard error over the binomial one (1 when it cannot be estimated).
// Per count: f = count / N, R f f and f (1 - f) / N, kept for the small counts that most of a
// row's are (each computed as for any other count, so the sums are the same).
double row_error_ratio(const Tallies& t, std::size_t r) {
  const std::uint64_t n = t.rays[r];
  std::uint32_t replicates = 0;
  for (std::uint32_t k = 0; k < kSobolReplicates; ++k)
    replicates += replicate_first_ray(n, k + 1) > replicate_first_ray(n, k) ? 1 : 0;
  if (replicates < 2) return 1.0;
  const double R = replicates, N = static_cast<double>(n);
  struct Terms {
    double squared = 0, binomial = 0;  // R f f and f (1 - f) / N
  };
  auto terms = [&](std::uint64_t count) {
    const double f = static_cast<double>(count) / N;
    return Terms{R * f * f, f * (1 - f) / N};
  };
  constexpr std::uint64_t kSmall = 32;
  Terms small[kSmall];
  for (std::uint64_t c = 0; c < kSmall; ++c) small[c] = terms(c);
  double spread = 0, binomial = 0;
  auto add = [&](std::uint64_t count, double square) {
    const Terms term = count < kSmall ? small[count] : terms(count);
    // max(0, .) / (R (R - 1)) adds +0 where the square is not above R f f: skipped.
    if (square - term.squared > 0) spread += (square - term.squared) / (R * (R - 1));
    binomial += term.binomial;
  };
  for (std::uint64_t k = t.hit_offset[r]; k < t.hit_offset[r + 1]; ++k)
    add(t.hit_count[k], t.hit_square[k]);
  add(t.escaped[r], t.escaped_square[r]);
  add(t.back_face[r], t.back_face_square[r]);
  return binomial > 0 ? std::clamp(std::sqrt(spread / binomial), 0.01, 100.0) : 1.0;
}

}  // namespace

std::vector<double> replicate_error_ratio(const Tallies& t) {
  if (t.hit_square.empty()) return {};
  std::vector<double> ratio(t.rows(), 1.0);
  // Rows in parallel, each by itself: the same numbers for any thread count.
  tbb::parallel_for(tbb::blocked_range<std::size_t>(0, t.rows(), 256),
                    [&](const tbb::blocked_range<std::size_t>& rows) {
                      for (std::size_t r = rows.begin(); r != rows.end(); ++r)
                        ratio[r] = row_error_ratio(t, r);
                    });
  return ratio;
}

ViewFactors raw_view_factors(const PatchSet& patches, const Tallies& tallies) {
  tallies_detail::check_tallies(patches, tallies);
  const std::size_t n = patches.size();
  const std::size_t rows = tallies.rows();

  ViewFactors vf;
  vf.names.reserve(n);
  vf.areas.reserve(n);
  for (const Patch& p : patches.patches) {
    vf.names.push_back(p.name);
    vf.areas.push_back(p.area);
  }
  vf.rays = tallies.rays;
  vf.to_surroundings.resize(rows);
  vf.to_back_faces.resize(rows);

  // Written straight into compressed storage (one pass to count the entries, one to fill): no
  // insertion bookkeeping and no slack at any size.
  std::uint64_t entries = 0;
  for (const std::uint64_t count : tallies.hit_count) entries += count > 0 ? 1 : 0;
  if (entries >
      static_cast<std::uint64_t>(std::numeric_limits<SparseMatrix::StorageIndex>::max())) {
    throw InputError("the view-factor matrix would have " + std::to_string(entries) +
                     " entries, more than its index type can address; use fewer patches");
  }
  vf.F.resize(static_cast<Eigen::Index>(rows), static_cast<Eigen::Index>(n));
  vf.F.resizeNonZeros(static_cast<Eigen::Index>(entries));
  SparseMatrix::StorageIndex* offset = vf.F.outerIndexPtr();
  SparseMatrix::StorageIndex* column = vf.F.innerIndexPtr();
  double* value = vf.F.valuePtr();
  SparseMatrix::StorageIndex next = 0;
  offset[0] = 0;
  for (std::size_t r = 0; r < rows; ++r) {
    const double rays = static_cast<double>(tallies.rays[r]);
    for (std::uint64_t k = tallies.hit_offset[r]; k < tallies.hit_offset[r + 1]; ++k) {
      if (tallies.hit_count[k] == 0) continue;  // no hit: a structural zero, not an entry
      column[next] = static_cast<SparseMatrix::StorageIndex>(tallies.hit_patch[k]);
      value[next] = static_cast<double>(tallies.hit_count[k]) / rays;
      ++next;
    }
    offset[r + 1] = next;
    vf.to_surroundings[r] = static_cast<double>(tallies.escaped[r]) / rays;
    vf.to_back_faces[r] = static_cast<double>(tallies.back_face[r]) / rays;
  }
  vf.smoothed = false;
  vf.max_correction_sigma = 0;
  vf.error_ratio = replicate_error_ratio(tallies);
  return vf;
}

}  // namespace hearthray
