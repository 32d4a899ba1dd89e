// The pair list of a smoothing problem and its O(non-zeros) passes (see smoothing_problem.hpp).
#include "smoothing/smoothing_problem.hpp"

#include <tbb/blocked_range.h>
#include <tbb/parallel_for.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <cstring>
#include <limits>
#include <string>

#include "hearthray/error.hpp"
#include "hearthray/statistics.hpp"

namespace hearthray {
namespace smoothing_detail {
namespace {

using Index = SparseMatrix::StorageIndex;

// Blocks of about this many pairs, at most kMaxBlocks of them: enough to keep a few cores busy
// while each block's buffer (n doubles per accumulated quantity) stays small next to the pairs.
constexpr std::size_t kPairsPerBlock = std::size_t{1} << 16;
constexpr std::size_t kMaxBlocks = 16;

inline Eigen::Index at(std::size_t i) {
  return static_cast<Eigen::Index>(i);
}

// Self, escaped and back-face exchange areas; a zero count stays +0 even where mu_i <= 0.
inline double own_area(double count, double mu_i) {
  return count == 0 ? 0.0 : count / mu_i;
}

// Visits the partners j > i of row i in ascending order: receivers j of row i's rays and
// senders j whose rays reached i (sent_from[sent_begin[i] .. sent_begin[i+1])), each once, as
// visit(j, N_ij, position s of j in sent_from, or kNotSent when j sent no ray to i).
constexpr std::uint64_t kNotSent = std::numeric_limits<std::uint64_t>::max();

template <class Visit>
void for_each_partner(const Tallies& t, const std::vector<std::uint64_t>& sent_begin,
                      const std::vector<std::uint32_t>& sent_from, std::size_t i, Visit visit) {
  const std::uint32_t* first = t.hit_patch.data() + t.hit_offset[i];
  const std::uint32_t* last = t.hit_patch.data() + t.hit_offset[i + 1];
  std::uint64_t k = static_cast<std::uint64_t>(
      std::upper_bound(first, last, static_cast<std::uint32_t>(i)) - t.hit_patch.data());
  const std::uint64_t end = t.hit_offset[i + 1];
  std::uint64_t s = sent_begin[i];
  const std::uint64_t s_end = sent_begin[i + 1];
  constexpr std::uint32_t kNone = std::numeric_limits<std::uint32_t>::max();
  while (k < end || s < s_end) {
    if (k < end && t.hit_count[k] == 0) {  // a receiver listed with no hit is no partner
      ++k;
      continue;
    }
    const std::uint32_t received = k < end ? t.hit_patch[k] : kNone;
    const std::uint32_t sent = s < s_end ? sent_from[s] : kNone;
    if (received < sent) {
      visit(received, t.hit_count[k++], kNotSent);
    } else if (sent < received) {
      visit(sent, std::uint64_t{0}, s++);
    } else {
      visit(received, t.hit_count[k++], s++);
    }
  }
}

// Sums a symmetric contribution over the pairs: out[m][i] and out[m][j] both receive
// kernel.pair(j, k)[m] for every pair (i, j) (kernel.row(i) is called first for each row).
// Each fixed block of rows scatters into its own buffer; buffers are added in block order.
template <int K, class Kernel>
void accumulate_pairs(Problem& p, const Kernel& kernel, const std::array<double*, K>& out) {
  const std::size_t n = p.n, blocks = p.block.size() - 1;
  if (p.scratch.size() < blocks * n * K) p.scratch.resize(blocks * n * K);
  const int* partner = p.partner();
  tbb::parallel_for(
      tbb::blocked_range<std::size_t>(0, blocks, 1),
      [&](const tbb::blocked_range<std::size_t>& range) {
        for (std::size_t b = range.begin(); b != range.end(); ++b) {
          double* buffer = p.scratch.data() + b * n * K;
          std::fill(buffer + p.block[b] * K, buffer + n * K, 0.0);  // rows before it: unused
          Kernel local = kernel;
          for (std::size_t i = p.block[b]; i < p.block[b + 1]; ++i) {
            local.row(i);
            std::array<double, K> own{};
            for (std::uint64_t k = p.row_begin[i]; k < p.row_begin[i + 1]; ++k) {
              const auto j = static_cast<std::size_t>(partner[k]);
              const std::array<double, K> term = local.pair(j, k);
              for (int m = 0; m < K; ++m) {
                own[m] += term[m];
                buffer[j * K + m] += term[m];
              }
            }
            for (int m = 0; m < K; ++m) buffer[i * K + m] += own[m];
          }
        }
      },
      tbb::simple_partitioner());
  tbb::parallel_for(tbb::blocked_range<std::size_t>(0, n, 2048),
                    [&](const tbb::blocked_range<std::size_t>& range) {
                      std::size_t last = 0;  // last block starting at or before row i
                      for (std::size_t i = range.begin(); i != range.end(); ++i) {
                        while (last + 1 < blocks && p.block[last + 1] <= i) ++last;
                        for (int m = 0; m < K; ++m) {
                          double sum = 0;
                          for (std::size_t b = 0; b <= last; ++b) {
                            sum += p.scratch[(b * n + i) * K + m];
                          }
                          out[m][i] = sum;
                        }
                      }
                    });
}

// Fixed blocks of rows with about equal work (offsets: n + 1 cumulative counts per row), at most
// kMaxBlocks of about kPairsPerBlock or more: set by the data alone, never by the thread count.
std::vector<std::size_t> partition(const std::vector<std::uint64_t>& offsets) {
  const std::size_t n = offsets.size() - 1;
  const std::uint64_t total = offsets.back();
  const std::size_t blocks = std::clamp<std::size_t>(total / kPairsPerBlock, 1, kMaxBlocks);
  std::vector<std::size_t> block(blocks + 1, n);
  block[0] = 0;
  for (std::size_t b = 1; b < blocks; ++b) {
    const std::uint64_t target = total * b / blocks;
    block[b] = static_cast<std::size_t>(std::lower_bound(offsets.begin(), offsets.end(), target) -
                                        offsets.begin());
  }
  return block;
}

// Runs body(b, first row, end row) for every block in parallel.
template <class Body>
void for_each_block(const std::vector<std::size_t>& block, Body body) {
  tbb::parallel_for(
      tbb::blocked_range<std::size_t>(0, block.size() - 1, 1),
      [&](const tbb::blocked_range<std::size_t>& range) {
        for (std::size_t b = range.begin(); b != range.end(); ++b) {
          body(b, block[b], block[b + 1]);
        }
      },
      tbb::simple_partitioner());
}

template <class Body>
void for_each_block(const Problem& p, Body body) {
  for_each_block(p.block, body);
}

// A transpose in parallel, deterministically: the items of each block of source rows go to
// destination rows, where they must lie in ascending source order. block_histograms counts
// them per (block, destination) by calling each(b, add) with add(destination) per item of
// block b; histograms_to_cursors turns the counts into each block's first slot per destination,
// start[d] plus the items from earlier blocks.
template <class T, class Each>
std::vector<T> block_histograms(const std::vector<std::size_t>& block, std::size_t n, Each each) {
  std::vector<T> count((block.size() - 1) * n, 0);
  for_each_block(block, [&](std::size_t b, std::size_t, std::size_t) {
    T* h = count.data() + b * n;
    each(b, [h](std::size_t d) { ++h[d]; });
  });
  return count;
}

template <class T>
T column_total(const std::vector<T>& count, std::size_t blocks, std::size_t n, std::size_t d) {
  T total = 0;
  for (std::size_t b = 0; b < blocks; ++b) total += count[b * n + d];
  return total;
}

template <class T, class Start>
void histograms_to_cursors(std::vector<T>* count, std::size_t blocks, std::size_t n,
                           const Start* start) {
  tbb::parallel_for(tbb::blocked_range<std::size_t>(0, n, 4096),
                    [&](const tbb::blocked_range<std::size_t>& range) {
                      for (std::size_t d = range.begin(); d != range.end(); ++d) {
                        T next = static_cast<T>(start[d]);
                        for (std::size_t b = 0; b < blocks; ++b) {
                          const T c = (*count)[b * n + d];
                          (*count)[b * n + d] = next;
                          next += c;
                        }
                      }
                    });
}

struct RowSumKernel {
  const double* mu;
  const double* count;
  float* weight;
  double mu_i = 0;
  void row(std::size_t i) { mu_i = mu[i]; }
  std::array<double, 2> pair(std::size_t j, std::uint64_t k) {
    const double inverse = 1 / (mu_i + mu[j]);  // one division per pair
    const double s = count[k] * inverse;
    const double w = s * inverse;
    weight[k] = static_cast<float>(w);
    return {s, w};
  }
};

struct ProductKernel {
  const float* weight;
  const double* v;
  double v_i = 0;
  void row(std::size_t i) { v_i = v[i]; }
  std::array<double, 1> pair(std::size_t j, std::uint64_t k) const {
    return {static_cast<double>(weight[k]) * (v_i + v[j])};
  }
};

// Standard error used to express a correction, with the proportion kept at least one ray away
// from 0 and 1: a zero count still carries an uncertainty of about one ray.
double correction_sigma(double f, std::uint64_t rays) {
  const double lo = std::min(0.5, 1 / static_cast<double>(rays));
  return factor_standard_error(std::clamp(f, lo, 1 - lo), rays);
}

}  // namespace

namespace {

int has_self(const Problem& p, std::size_t i) {
  return p.self[at(i)] > 0 ? 1 : 0;
}

// The per-row terms of the problem: own counts (self, escaped, back faces) and areas.
void fill_row_terms(const PatchSet& patches, const Tallies& t, Problem* p) {
  const std::size_t n = p->n;
  const auto size = static_cast<Eigen::Index>(n);
  p->self.setZero(size);
  p->escaped.resize(size);
  p->back.resize(size);
  p->area.resize(size);
  p->own_weight.setZero(size);
  for (std::size_t i = 0; i < n; ++i) {
    p->escaped[at(i)] = static_cast<double>(t.escaped[i]);
    p->back[at(i)] = static_cast<double>(t.back_face[i]);
    p->area[at(i)] = patches.patches[i].area;
    const std::uint32_t* first = t.hit_patch.data() + t.hit_offset[i];
    const std::uint32_t* last = t.hit_patch.data() + t.hit_offset[i + 1];
    const std::uint32_t* self = std::lower_bound(first, last, static_cast<std::uint32_t>(i));
    if (self != last && *self == i) {
      p->self[at(i)] =
          static_cast<double>(t.hit_count[static_cast<std::size_t>(self - t.hit_patch.data())]);
    }
  }
  p->lumped = p->self + p->escaped + p->back;
}

// Senders: the transpose of the strictly lower part of the counts (rays from j to i < j),
// so that each row can list its partners j > i in either direction. 4 bytes per entry,
// freed once the pair list is built.
struct Senders {
  std::vector<std::uint64_t> begin;  // row i's senders: from[begin[i] .. begin[i + 1])
  std::vector<std::uint32_t> from;
};

Senders transpose_senders(const Tallies& t, std::size_t n) {
  const std::vector<std::size_t> tally_block = partition(t.hit_offset);
  auto each_sender = [&](std::size_t b, auto&& sent) {
    for (std::size_t j = tally_block[b]; j < tally_block[b + 1]; ++j) {
      for (std::uint64_t k = t.hit_offset[j]; k < t.hit_offset[j + 1]; ++k) {
        const std::uint32_t i = t.hit_patch[k];
        if (i >= j) break;
        if (t.hit_count[k] > 0) sent(i, j);
      }
    }
  };
  std::vector<std::uint64_t> cursor =
      block_histograms<std::uint64_t>(tally_block, n, [&](std::size_t b, auto&& add) {
        each_sender(b, [&](std::uint32_t i, std::size_t) { add(i); });
      });
  Senders senders;
  senders.begin.assign(n + 1, 0);
  for (std::size_t i = 0; i < n; ++i) {
    senders.begin[i + 1] = senders.begin[i] + column_total(cursor, tally_block.size() - 1, n, i);
  }
  histograms_to_cursors(&cursor, tally_block.size() - 1, n, senders.begin.data());
  senders.from.resize(senders.begin[n]);
  for_each_block(tally_block, [&](std::size_t b, std::size_t, std::size_t) {
    std::uint64_t* next = cursor.data() + b * n;
    each_sender(b, [&](std::uint32_t i, std::size_t j) {
      senders.from[next[i]++] = static_cast<std::uint32_t>(j);
    });
  });
  return senders;
}

// Counts the pairs of each row (p.row_begin, p.pairs); returns the entries the final matrix
// will hold, refusing more than its index type can address.
std::uint64_t count_pairs(const Tallies& t, const Senders& senders, Problem* p) {
  const std::size_t n = p->n;
  p->row_begin.assign(n + 1, 0);
  tbb::parallel_for(tbb::blocked_range<std::size_t>(0, n, 256),
                    [&](const tbb::blocked_range<std::size_t>& range) {
                      for (std::size_t i = range.begin(); i != range.end(); ++i) {
                        std::uint64_t partners = 0;
                        for_each_partner(
                            t, senders.begin, senders.from, i,
                            [&](std::uint32_t, std::uint64_t, std::uint64_t) { ++partners; });
                        p->row_begin[i + 1] = partners;
                      }
                    });
  for (std::size_t i = 0; i < n; ++i) p->row_begin[i + 1] += p->row_begin[i];
  p->pairs = p->row_begin[n];
  std::uint64_t entries = 2 * p->pairs;
  for (std::size_t i = 0; i < n; ++i) entries += has_self(*p, i);
  if (entries > static_cast<std::uint64_t>(std::numeric_limits<Index>::max())) {
    throw InputError("the smoothed view-factor matrix would have " + std::to_string(entries) +
                     " entries, more than its index type can address; use fewer patches");
  }
  return entries;
}

// Writes sent[s] = the rays that sender senders.from[s] (a row j > i) sent to row i, for the
// rows i of [first, last). Each row j of the tallies is read once, over its run of receivers
// in the block; the writes stay within the block's rows, not spread over the tallies as
// looking each count up from its row would be.
void gather_sent(const Tallies& t, const Senders& senders, std::size_t first, std::size_t last,
                 double* sent) {
  const std::size_t n = senders.begin.size() - 1;
  std::vector<std::uint64_t> next(senders.begin.begin() + static_cast<std::ptrdiff_t>(first),
                                  senders.begin.begin() + static_cast<std::ptrdiff_t>(last));
  for (std::size_t j = first + 1; j < n; ++j) {
    const std::uint32_t* row = t.hit_patch.data() + t.hit_offset[j];
    const std::uint32_t* row_end = t.hit_patch.data() + t.hit_offset[j + 1];
    const std::uint32_t* q = std::lower_bound(row, row_end, static_cast<std::uint32_t>(first));
    for (; q != row_end && *q < last && *q < j; ++q) {
      const std::uint64_t rays = t.hit_count[static_cast<std::size_t>(q - t.hit_patch.data())];
      if (rays > 0) sent[next[*q - first]++] = static_cast<double>(rays);  // exact below 2^53
    }
  }
}

// Fills each row's pairs: partner and the rays exchanged both ways, into p.F's arrays. The
// rays from senders are first gathered into the values from `pairs` on (free until the
// weights; there are fewer senders than pairs).
void fill_pairs(const Tallies& t, const Senders& senders, Problem* p) {
  Index* partner = p->F.innerIndexPtr();
  double* count = p->F.valuePtr();
  double* sent = p->F.valuePtr() + p->pairs;
  for_each_block(p->block, [&](std::size_t, std::size_t first, std::size_t last) {
    gather_sent(t, senders, first, last, sent);
    for (std::size_t i = first; i < last; ++i) {
      std::uint64_t out = p->row_begin[i];
      for_each_partner(t, senders.begin, senders.from, i,
                       [&](std::uint32_t j, std::uint64_t received, std::uint64_t s) {
                         partner[out] = static_cast<Index>(j);
                         // exact below 2^53
                         count[out] = static_cast<double>(received) + (s == kNotSent ? 0 : sent[s]);
                         ++out;
                       });
    }
  });
}

}  // namespace

Problem make_problem(const PatchSet& patches, const Tallies& t) {
  Problem p;
  const std::size_t n = patches.size();
  p.n = n;
  fill_row_terms(patches, t, &p);
  const Senders senders = transpose_senders(t, n);
  const std::uint64_t entries = count_pairs(t, senders, &p);
  p.block = partition(p.row_begin);
  const std::size_t blocks = p.block.size() - 1;
  const auto size = static_cast<Eigen::Index>(n);
  p.F.resize(size, size);
  // Room for a diagonal entry in each row that loses rays and has none: the thermal model
  // folds the leaks of a closed mesh there in place (thermal_model.cpp), with no second copy.
  std::uint64_t spare = 0;
  for (std::size_t i = 0; i < n; ++i) {
    spare += !has_self(p, i) && p.escaped[at(i)] + p.back[at(i)] > 0 ? 1 : 0;
  }
  p.F.reserve(static_cast<Eigen::Index>(std::min<std::uint64_t>(
      entries + spare, static_cast<std::uint64_t>(std::numeric_limits<Index>::max()))));
  p.F.resizeNonZeros(static_cast<Eigen::Index>(entries));
  fill_pairs(t, senders, &p);

  // Partners j < i of each row i (the final layout's entries left of the diagonal).
  const Index* partner = p.F.innerIndexPtr();
  const std::vector<Index> block_lower =
      block_histograms<Index>(p.block, n, [&](std::size_t b, auto&& add) {
        for (std::uint64_t k = p.row_begin[p.block[b]]; k < p.row_begin[p.block[b + 1]]; ++k) {
          add(static_cast<std::size_t>(partner[k]));
        }
      });
  p.lower.resize(n);
  for (std::size_t i = 0; i < n; ++i) {
    p.lower[i] = column_total(block_lower, blocks, n, i);
    if (p.lumped[at(i)] == 0 && p.row_begin[i + 1] == p.row_begin[i] && p.lower[i] == 0) {
      throw InputError("patch " + std::to_string(i) + " '" + patches.patches[i].name +
                       "': no ray from it or to it was counted, so its row cannot be smoothed");
    }
  }
  return p;
}

void row_sums(Problem& p, const Eigen::VectorXd& mu, Eigen::VectorXd* R, Eigen::VectorXd* H_diag) {
  const auto size = static_cast<Eigen::Index>(p.n);
  R->resize(size);
  H_diag->resize(size);
  accumulate_pairs<2>(p, RowSumKernel{mu.data(), p.count(), p.weight()},
                      {R->data(), H_diag->data()});
  for (Eigen::Index i = 0; i < size; ++i) {
    const double c = p.lumped[i];
    p.own_weight[i] = c == 0 ? 0.0 : c / (mu[i] * mu[i]);
    (*R)[i] += own_area(c, mu[i]);
    (*H_diag)[i] += p.own_weight[i];
  }
}

void hessian_times(Problem& p, const Eigen::VectorXd& v, Eigen::VectorXd* y) {
  y->resize(static_cast<Eigen::Index>(p.n));
  accumulate_pairs<1>(p, ProductKernel{p.weight(), v.data()}, {y->data()});
  y->array() += p.own_weight.array() * v.array();
}

Eigen::MatrixXd dense_hessian(const Problem& p, const Eigen::VectorXd& H_diag) {
  const auto size = static_cast<Eigen::Index>(p.n);
  Eigen::MatrixXd H = Eigen::MatrixXd::Zero(size, size);
  H.diagonal() = H_diag;
  for (Eigen::Index i = 0; i < size; ++i) {
    for (std::uint64_t k = p.row_begin[static_cast<std::size_t>(i)];
         k < p.row_begin[static_cast<std::size_t>(i) + 1]; ++k) {
      const Eigen::Index j = p.partner()[k];
      H(i, j) = H(j, i) = p.weight()[k];
    }
  }
  return H;
}

double step_to_boundary(Problem& p, const Eigen::VectorXd& mu, const Eigen::VectorXd& delta) {
  // Every multiplier positive and none falling by 90 % of itself: no sum mu_i + mu_j loses
  // more than 90 % either, so the whole step keeps the 5 % asked below and the pass over the
  // pairs would return 1 (the usual case near the answer).
  bool inside = true;
  for (Eigen::Index i = 0; i < mu.size() && inside; ++i) {
    inside = mu[i] > 0 && delta[i] >= -0.9 * mu[i];
  }
  if (inside) return 1;
  std::vector<double> alpha(p.block.size() - 1, 1.0);
  const int* partner = p.partner();
  for_each_block(p, [&](std::size_t b, std::size_t first, std::size_t last) {
    double a = 1;
    for (std::size_t i = first; i < last; ++i) {
      const auto ii = static_cast<Eigen::Index>(i);
      const double di = delta[ii], mu_i = mu[ii];
      if (p.lumped[ii] > 0 && di < 0) a = std::min(a, 0.95 * mu_i / -di);
      for (std::uint64_t k = p.row_begin[i]; k < p.row_begin[i + 1]; ++k) {
        const Eigen::Index j = partner[k];
        const double d = di + delta[j], room = 0.95 * (mu_i + mu[j]);
        if (a * -d > room) a = room / -d;  // divides only where the step shrinks
      }
    }
    alpha[b] = a;
  });
  return *std::min_element(alpha.begin(), alpha.end());
}

namespace {

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

// Row sums and the largest change from the raw factors F_ij = N_ij / N_i, row by row.
void measure_rows(const Problem& p, const Tallies& t, const ViewFactors& vf, Measures* m) {
  const std::size_t blocks = p.block.size() - 1;
  const Index* offset = p.F.outerIndexPtr();
  const Index* column = p.F.innerIndexPtr();
  const double* value = p.F.valuePtr();
  std::vector<double> row_error(blocks, 0.0), correction(blocks, 0.0);
  // Sampler sobol: standard errors from the replicates (the binomial one times the row's ratio,
  // replicate_error_ratio, which the caller has put in vf.error_ratio).
  const std::vector<double>& ratio = vf.error_ratio;
  for_each_block(p, [&](std::size_t b, std::size_t first, std::size_t last) {
    double worst_row = 0, worst_correction = 0;
    for (std::size_t i = first; i < last; ++i) {
      const std::uint64_t rays = t.rays[i];
      const double n_i = static_cast<double>(rays);
      auto note = [&](double smoothed, double before) {
        if (smoothed == 0 && before == 0) return;
        const double sigma =
            correction_sigma(std::max(smoothed, before), rays) * (ratio.empty() ? 1.0 : ratio[i]);
        worst_correction = std::max(worst_correction, std::abs(smoothed - before) / sigma);
      };
      std::uint64_t r = t.hit_offset[i];  // merge walk: both lists ascend
      double sum = 0;
      for (Index k = offset[i]; k < offset[i + 1]; ++k) {
        sum += value[k];
        const auto col = static_cast<std::uint32_t>(column[k]);
        while (r < t.hit_offset[i + 1] && t.hit_patch[r] < col) ++r;
        const bool counted = r < t.hit_offset[i + 1] && t.hit_patch[r] == col;
        note(value[k], counted ? static_cast<double>(t.hit_count[r]) / n_i : 0.0);
      }
      sum += vf.to_surroundings[i] + vf.to_back_faces[i];
      worst_row = std::max(worst_row, std::abs(sum - 1));
      note(vf.to_surroundings[i], static_cast<double>(t.escaped[i]) / n_i);
      note(vf.to_back_faces[i], static_cast<double>(t.back_face[i]) / n_i);
    }
    row_error[b] = worst_row;
    correction[b] = worst_correction;
  });
  m->max_row_error = *std::max_element(row_error.begin(), row_error.end());
  m->max_correction_sigma = *std::max_element(correction.begin(), correction.end());
}

}  // namespace

Measures finish(Problem& p, const Eigen::VectorXd& mu, const Tallies& t, ViewFactors* vf) {
  final_row_layout(p);
  Measures m;
  m.max_reciprocity_error = fill_factors(p, mu, vf);
  measure_rows(p, t, *vf, &m);
  vf->F.swap(p.F);
  return m;
}

}  // namespace smoothing_detail
}  // namespace hearthray
