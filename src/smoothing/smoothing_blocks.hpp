// Private to smoothing: the fixed blocks of rows every pass over the pair list runs over, and
// small helpers shared by building the problem (smoothing_problem.cpp) and finishing the matrix
// (smoothing_finish.cpp). Blocks are set by the data alone, never by the thread count, so
// results are the same for any thread count.
#pragma once

#include <tbb/blocked_range.h>
#include <tbb/parallel_for.h>

#include <algorithm>
#include <cstdint>
#include <vector>

#include "smoothing/smoothing_problem.hpp"

namespace hearthray {
namespace smoothing_detail {

using Index = SparseMatrix::StorageIndex;

// Blocks of about this many pairs, at most kMaxBlocks of them: enough to keep a few cores busy
// while each block's buffer (n doubles per accumulated quantity) stays small next to the pairs.
inline constexpr std::size_t kPairsPerBlock = std::size_t{1} << 16;
inline constexpr std::size_t kMaxBlocks = 16;

inline Eigen::Index at(std::size_t i) {
  return static_cast<Eigen::Index>(i);
}

// Self, escaped and back-face exchange areas; a zero count stays +0 even where mu_i <= 0.
inline double own_area(double count, double mu_i) {
  return count == 0 ? 0.0 : count / mu_i;
}

inline int has_self(const Problem& p, std::size_t i) {
  return p.self[at(i)] > 0 ? 1 : 0;
}

// Fixed blocks of rows with about equal work (offsets: n + 1 cumulative counts per row), at most
// kMaxBlocks of about kPairsPerBlock or more: set by the data alone, never by the thread count.
inline std::vector<std::size_t> partition(const std::vector<std::uint64_t>& offsets) {
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

}  // namespace smoothing_detail
}  // namespace hearthray
