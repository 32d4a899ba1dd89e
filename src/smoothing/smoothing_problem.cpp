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
#include "smoothing/smoothing_blocks.hpp"

namespace hearthray {
namespace smoothing_detail {
namespace {

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

// Where each fixed block's rows start in every row of the tallies: entry b n + j is the first
// receiver of row j at or after block b's first row. Found row by row, so that a row's
// searches share its cache lines (block by block, each search would fetch them again).
std::vector<std::uint64_t> block_starts(const Tallies& t, const std::vector<std::size_t>& block) {
  const std::size_t n = t.rows(), blocks = block.size() - 1;
  std::vector<std::uint64_t> start(blocks * n);
  tbb::parallel_for(tbb::blocked_range<std::size_t>(0, n, 1024),
                    [&](const tbb::blocked_range<std::size_t>& range) {
                      for (std::size_t j = range.begin(); j != range.end(); ++j) {
                        const std::uint32_t* q = t.hit_patch.data() + t.hit_offset[j];
                        const std::uint32_t* row_end = t.hit_patch.data() + t.hit_offset[j + 1];
                        for (std::size_t b = 0; b < blocks; ++b) {
                          q = std::lower_bound(q, row_end, static_cast<std::uint32_t>(block[b]));
                          start[b * n + j] = static_cast<std::uint64_t>(q - t.hit_patch.data());
                        }
                      }
                    });
  return start;
}

// Writes sent[s] = the rays that sender senders.from[s] (a row j > i) sent to row i, for the
// rows i of [first, last), whose receivers start in row j at start[j] (block_starts). Each row
// j of the tallies is read once, over its run of receivers in the block; the writes stay
// within the block's rows, not spread over the tallies as looking each count up from its row
// would be.
void gather_sent(const Tallies& t, const Senders& senders, std::size_t first, std::size_t last,
                 const std::uint64_t* start, double* sent) {
  const std::size_t n = senders.begin.size() - 1;
  std::vector<std::uint64_t> next(senders.begin.begin() + static_cast<std::ptrdiff_t>(first),
                                  senders.begin.begin() + static_cast<std::ptrdiff_t>(last));
  for (std::size_t j = first + 1; j < n; ++j) {
    const std::uint32_t* row_end = t.hit_patch.data() + t.hit_offset[j + 1];
    const std::uint32_t* q = t.hit_patch.data() + start[j];
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
  const std::vector<std::uint64_t> start = block_starts(t, p->block);
  for_each_block(p->block, [&](std::size_t b, std::size_t first, std::size_t last) {
    gather_sent(t, senders, first, last, start.data() + b * p->n, sent);
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

}  // namespace smoothing_detail
}  // namespace hearthray
