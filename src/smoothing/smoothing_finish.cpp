// Finishing a smoothing problem: the final symmetric layout of F in place, the factors from
// the multipliers, and the measures of the result (see smoothing_problem.hpp, finish()).
#include <tbb/blocked_range.h>
#include <tbb/parallel_for.h>
#include <tbb/parallel_reduce.h>
#include <tbb/task_group.h>

#include <algorithm>
#include <cmath>
#include <cstring>
#include <utility>
#include <vector>

#include "hearthray/statistics.hpp"
#include "smoothing/smoothing_blocks.hpp"
#include "smoothing/smoothing_problem.hpp"

namespace hearthray {
namespace smoothing_detail {
namespace {

// Standard error used to express a correction, with the proportion kept at least one ray away
// from 0 and 1: a zero count still carries an uncertainty of about one ray.
double correction_sigma(double f, std::uint64_t rays) {
  const double lo = std::min(0.5, 1 / static_cast<double>(rays));
  return factor_standard_error(std::clamp(f, lo, 1 - lo), rays);
}

// Lays out the final rows of p.F around the pair list: for each row its entries left of the
// diagonal, its own entry, then its pairs (moved there).
void final_row_layout(Problem& p) {
  const std::size_t n = p.n;
  Index* offset = p.F.outerIndexPtr();
  Index* column = p.F.innerIndexPtr();
  double* value = p.F.valuePtr();
  offset[0] = 0;
  for (std::size_t i = 0; i < n; ++i) {
    offset[i + 1] = offset[i] + p.lower[i] + has_self(p, i) +
                    static_cast<Index>(p.row_begin[i + 1] - p.row_begin[i]);
  }
  // Move each row's pairs to the end of its final row, last row first: a row only moves to
  // higher positions, and every later row has already moved, so nothing is overwritten before
  // it is read.
  // The weights (values from `pairs` on) are no longer needed.
  for (std::size_t i = n; i-- > 0;) {
    const std::uint64_t from = p.row_begin[i], len = p.row_begin[i + 1] - from;
    // No pairs: nothing to move (and with no non-zeros at all the arrays are null, which
    // memmove must not be given even for zero bytes).
    if (len == 0) continue;
    const std::uint64_t to = static_cast<std::uint64_t>(offset[i] + p.lower[i] + has_self(p, i));
    std::memmove(column + to, column + from, len * sizeof(Index));
    std::memmove(value + to, value + from, len * sizeof(double));
  }
}

// Index of row i's first pair (in the final layout) per block of destination rows: entry
// d n + i is the first pair of row i whose partner is at least dest[d], for d = 0 .. blocks.
std::vector<Index> first_pair_per_block(const Problem& p, const std::vector<std::size_t>& dest) {
  const std::size_t n = p.n, blocks = dest.size() - 1;
  const Index* offset = p.F.outerIndexPtr();
  const Index* column = p.F.innerIndexPtr();
  std::vector<Index> first((blocks + 1) * n);
  for_each_block(p, [&](std::size_t, std::size_t begin, std::size_t end) {
    for (std::size_t i = begin; i < end; ++i) {
      Index k = offset[i] + p.lower[i] + has_self(p, i);
      for (std::size_t d = 0; d <= blocks; ++d) {
        while (k < offset[i + 1] && static_cast<std::size_t>(column[k]) < dest[d]) ++k;
        first[d * n + i] = k;
      }
    }
  });
  return first;
}

// Blocks of destination rows for fill_factors with about equal entries left of the diagonal:
// at least kMaxBlocks, and more for large n, so that a block's write cursors (two cache lines
// per row) stay within about 1 MB. Set by the data alone (the results do not depend on them).
std::vector<std::size_t> mirror_blocks(const Problem& p) {
  constexpr std::size_t kRowsPerMirrorBlock = 8192;
  const std::size_t n = p.n;
  std::vector<std::uint64_t> cumulative(n + 1, 0);
  for (std::size_t i = 0; i < n; ++i) cumulative[i + 1] = cumulative[i] + p.lower[i];
  const std::size_t blocks = std::clamp<std::size_t>(
      std::max(kMaxBlocks, (n + kRowsPerMirrorBlock - 1) / kRowsPerMirrorBlock), 1,
      std::max<std::size_t>(n, 1));
  std::vector<std::size_t> dest(blocks + 1, n);
  dest[0] = 0;
  for (std::size_t b = 1; b < blocks; ++b) {
    const std::uint64_t target = cumulative[n] * b / blocks;
    dest[b] = static_cast<std::size_t>(
        std::lower_bound(cumulative.begin(), cumulative.end(), target) - cumulative.begin());
  }
  return dest;
}

// Exchange areas S_ij = n_ij / (mu_i + mu_j) once per pair, divided by A_i in row i and by
// A_j in row j, whose entries left of the diagonal fill up in ascending i. The mirrored
// entries are written by blocks of destination rows: each block reads the pairs that reach
// its rows from every row above, so its writes stay within its rows' cursors (in cache)
// rather than spread over the whole matrix. Reciprocity is measured on the stored values:
// returns the largest |S_ij - S_ji| relative to the largest S.
double fill_factors(Problem& p, const Eigen::VectorXd& mu, ViewFactors* vf) {
  const std::size_t n = p.n, blocks = p.block.size() - 1;
  Index* offset = p.F.outerIndexPtr();
  Index* column = p.F.innerIndexPtr();
  double* value = p.F.valuePtr();
  vf->to_surroundings.resize(n);
  vf->to_back_faces.resize(n);
  std::vector<double> largest(blocks, 0.0);
  for_each_block(p, [&](std::size_t b, std::size_t first, std::size_t last) {
    double top = 0;
    for (std::size_t i = first; i < last; ++i) {
      const double a = p.area[at(i)], mu_i = mu[at(i)];
      if (has_self(p, i)) {
        const Index k = offset[i] + p.lower[i];
        column[k] = static_cast<Index>(i);
        value[k] = own_area(p.self[at(i)], mu_i) / a;
        top = std::max(top, a * value[k]);
      }
      vf->to_surroundings[i] = own_area(p.escaped[at(i)], mu_i) / a;
      vf->to_back_faces[i] = own_area(p.back[at(i)], mu_i) / a;
    }
    largest[b] = top;
  });
  const std::vector<std::size_t> dest = mirror_blocks(p);
  const std::size_t dest_blocks = dest.size() - 1;
  const std::vector<Index> first = first_pair_per_block(p, dest);
  std::vector<double> pair_largest(dest_blocks, 0.0), asymmetry(dest_blocks, 0.0);
  for_each_block(dest, [&](std::size_t d, std::size_t begin, std::size_t end) {
    std::vector<Index> next(offset + begin, offset + end);  // next free slot left of diagonal
    const Index* from = first.data() + d * n;
    const Index* to = first.data() + (d + 1) * n;
    double top = 0, worst = 0;
    for (std::size_t i = 0; i + 1 < end; ++i) {
      const double a = p.area[at(i)], mu_i = mu[at(i)];
      for (Index k = from[i]; k < to[i]; ++k) {
        const Index j = column[k];
        const double s = value[k] / (mu_i + mu[j]);
        const double a_j = p.area[j];
        value[k] = s / a;
        const Index mirror = next[static_cast<std::size_t>(j) - begin]++;
        column[mirror] = static_cast<Index>(i);
        value[mirror] = s / a_j;
        const double s_ij = a * value[k], s_ji = a_j * value[mirror];
        top = std::max({top, s_ij, s_ji});
        worst = std::max(worst, std::abs(s_ij - s_ji));
      }
    }
    pair_largest[d] = top;
    asymmetry[d] = worst;
  });
  const double top = std::max(*std::max_element(largest.begin(), largest.end()),
                              *std::max_element(pair_largest.begin(), pair_largest.end()));
  return top > 0 ? *std::max_element(asymmetry.begin(), asymmetry.end()) / top : 0;
}

// The raw factors count / rays of one row for counts below kSmallCounts (most of a row's: a
// patch's rays spread over many receivers), each the same division as for larger counts.
constexpr std::uint64_t kSmallCounts = 64;

struct RawFactors {
  double rays = 0;
  double small[kSmallCounts];
  explicit RawFactors(std::uint64_t n) : rays(static_cast<double>(n)) {
    for (std::uint64_t c = 0; c < kSmallCounts; ++c) small[c] = static_cast<double>(c) / rays;
  }
  double operator()(std::uint64_t count) const {
    return count < kSmallCounts ? small[count] : static_cast<double>(count) / rays;
  }
};

// The largest |smoothed - raw| / sigma of one row, sigma = correction_sigma(larger of the two,
// rays) * ratio. Every sigma of the row is at least floor = the standard error at a proportion
// one ray from 0 (p (1 - p) is smallest at the ends of the clamp), so a change with
// |smoothed - raw| below worst * floor cannot raise the row's largest and its square root and
// divisions are skipped. floor is halved: a margin far above round-off (at the clamp's upper
// end 1 - (1 - lo) is lo only to within 2^-53). The largest is thus exactly the one computed
// entry by entry.
class RowCorrections {
 public:
  RowCorrections(std::uint64_t rays, double ratio, double worst)
      : rays_(rays), ratio_(ratio), worst_(worst) {
    const double lo = std::min(0.5, 1 / static_cast<double>(rays));
    floor_ = rays > 0 ? 0.5 * factor_standard_error(lo, rays) * ratio : 0.0;
  }
  void note(double smoothed, double before) {
    if (smoothed == 0 && before == 0) return;
    const double change = std::abs(smoothed - before);
    if (change < worst_ * floor_) return;
    const double sigma = correction_sigma(std::max(smoothed, before), rays_) * ratio_;
    worst_ = std::max(worst_, change / sigma);
  }
  double worst() const { return worst_; }

 private:
  std::uint64_t rays_;
  double ratio_, worst_, floor_ = 0;
};

// Row sums and the largest change from the raw factors F_ij = N_ij / N_i, row by row.
void measure_rows(const Problem& p, const Tallies& t, const ViewFactors& vf, Measures* m) {
  const Index* offset = p.F.outerIndexPtr();
  const Index* column = p.F.innerIndexPtr();
  const double* value = p.F.valuePtr();
  // Sampler sobol: standard errors from the replicates (the binomial one times the row's ratio,
  // replicate_error_ratio, which finish() has put in vf.error_ratio).
  const std::vector<double>& ratio = vf.error_ratio;
  // Both measures are maxima, exact in any grouping (and never NaN: std::max(m, NaN) is m), so
  // the rows are shared out in small ranges rather than the fixed blocks of the pair passes:
  // those are balanced on the pairs right of the diagonal, and this pass reads whole rows,
  // which left one thread measuring the last blocks alone for 0.2 s at 98,592 patches.
  using Worst = std::pair<double, double>;  // row error, correction
  const Worst worst = tbb::parallel_reduce(
      tbb::blocked_range<std::size_t>(0, p.n, 256), Worst{0.0, 0.0},
      [&](const tbb::blocked_range<std::size_t>& rows, Worst so_far) {
        double worst_row = so_far.first, worst_correction = so_far.second;
        for (std::size_t i = rows.begin(); i < rows.end(); ++i) {
          const RawFactors raw(t.rays[i]);
          RowCorrections row(t.rays[i], ratio.empty() ? 1.0 : ratio[i], worst_correction);
          std::uint64_t r = t.hit_offset[i];  // merge walk: both lists ascend
          double sum = 0;
          for (Index k = offset[i]; k < offset[i + 1]; ++k) {
            sum += value[k];
            const auto col = static_cast<std::uint32_t>(column[k]);
            while (r < t.hit_offset[i + 1] && t.hit_patch[r] < col) ++r;
            const bool counted = r < t.hit_offset[i + 1] && t.hit_patch[r] == col;
            row.note(value[k], counted ? raw(t.hit_count[r]) : 0.0);
          }
          sum += vf.to_surroundings[i] + vf.to_back_faces[i];
          worst_row = std::max(worst_row, std::abs(sum - 1));
          row.note(vf.to_surroundings[i], raw(t.escaped[i]));
          row.note(vf.to_back_faces[i], raw(t.back_face[i]));
          worst_correction = row.worst();
        }
        return Worst{worst_row, worst_correction};
      },
      [](const Worst& a, const Worst& b) {
        return Worst{std::max(a.first, b.first), std::max(a.second, b.second)};
      });
  m->max_row_error = worst.first;
  m->max_correction_sigma = worst.second;
}

}  // namespace

Measures finish(Problem& p, const Eigen::VectorXd& mu, const Tallies& t, ViewFactors* vf) {
  // The final layout moves the pairs in place on one thread (a row only after every later one:
  // at 98,592 patches about 1 GB, 0.1 s); the replicate error ratios, which the measures read,
  // are worked out meanwhile on the other threads (rows by themselves: the same numbers).
  tbb::task_group ratios;
  ratios.run([&] { vf->error_ratio = replicate_error_ratio(t); });
  final_row_layout(p);
  ratios.wait();
  Measures m;
  m.max_reciprocity_error = fill_factors(p, mu, vf);
  measure_rows(p, t, *vf, &m);
  vf->F.swap(p.F);
  return m;
}

}  // namespace smoothing_detail
}  // namespace hearthray
