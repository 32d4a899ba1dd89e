// Products with reciprocal view factors from the entries on and right of the diagonal (see
// exchange_reciprocal.hpp).
#include "exchange/exchange_reciprocal.hpp"

#include <tbb/blocked_range.h>
#include <tbb/parallel_for.h>

#include <algorithm>
#include <cmath>

#include "exchange/exchange_krylov.hpp"

namespace hearthray {
namespace exchange_detail {
namespace {

// Blocks of about this many stored entries, at most kMaxBlocks: enough to keep a few cores
// busy while the buffers (n doubles per block) stay small next to F.
constexpr std::uint64_t kEntriesPerBlock = std::uint64_t{1} << 16;
constexpr std::uint64_t kMaxBlocks = 16;
// Largest relative difference per row between the two products of the check.
constexpr double kAgreement = 1e-12;

// Row i's entries from `k` (its first at or right of the diagonal) to `end`: returns
// sum_{j >= i} F_ij x_j and adds F_ij z to buffer[j] for j > i. The sum right of the diagonal
// goes into four partial sums, the entry q places after the diagonal into sum q mod 4, added
// as (s0 + s1) + (s2 + s3) and then to the diagonal's term: four chains of additions rather
// than one, which measured 4-7 % less CPU per product at 98,592 faces (one thread, the
// product's floor being the stream of F's entries).
inline double upper_row(SparseMatrix::StorageIndex k, SparseMatrix::StorageIndex end,
                        Eigen::Index i, const SparseMatrix::StorageIndex* column,
                        const double* value, const double* in, double z, double* buffer) {
  double diagonal = 0;
  if (k < end && column[k] == i) diagonal = value[k++] * in[i];
  double s[4] = {0, 0, 0, 0};
  for (; k + 4 <= end; k += 4) {
    for (int q = 0; q < 4; ++q) {
      const auto j = column[k + q];
      s[q] += value[k + q] * in[j];
      buffer[j] += value[k + q] * z;
    }
  }
  for (int q = 0; k < end; ++k, ++q) {
    const auto j = column[k];
    s[q] += value[k] * in[j];
    buffer[j] += value[k] * z;
  }
  return diagonal + ((s[0] + s[1]) + (s[2] + s[3]));
}

}  // namespace

Eigen::VectorXd ReciprocalProduct::check_vector(Eigen::Index n) {
  Eigen::VectorXd x(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    const double t = 0.6180339887498949 * static_cast<double>(i);
    x[i] = 1 + (t - std::floor(t));
  }
  return x;
}

ReciprocalProduct::ReciprocalProduct(const SparseMatrix& F, const Eigen::VectorXd& area)
    : ReciprocalProduct(F, area, [&F] {
        Eigen::VectorXd whole;
        exchange_detail::multiply(F, check_vector(F.rows()), &whole);
        return whole;
      }()) {}

ReciprocalProduct::ReciprocalProduct(const SparseMatrix& F, const Eigen::VectorXd& area,
                                     const Eigen::VectorXd& whole_check)
    : F_(F), area_(area) {
  const Eigen::Index n = F.rows();
  if (n == 0 || F.cols() != n || area.size() != n || !F.isCompressed()) return;
  if (whole_check.size() != n || !(area.minCoeff() > 0)) return;
  const auto* outer = F.outerIndexPtr();
  const auto* column = F.innerIndexPtr();
  first_.resize(static_cast<std::size_t>(n));
  std::vector<std::uint64_t> upper(static_cast<std::size_t>(n) + 1, 0);
  for (Eigen::Index i = 0; i < n; ++i) {
    const auto* at = std::lower_bound(column + outer[i], column + outer[i + 1],
                                      static_cast<SparseMatrix::StorageIndex>(i));
    first_[static_cast<std::size_t>(i)] = static_cast<SparseMatrix::StorageIndex>(at - column);
    upper[static_cast<std::size_t>(i) + 1] =
        upper[static_cast<std::size_t>(i)] + static_cast<std::uint64_t>(column + outer[i + 1] - at);
  }
  const std::uint64_t total = upper.back();
  const std::uint64_t blocks = std::clamp<std::uint64_t>(total / kEntriesPerBlock, 1, kMaxBlocks);
  block_.assign(blocks + 1, n);
  block_[0] = 0;
  for (std::uint64_t b = 1; b < blocks; ++b) {
    block_[b] = std::lower_bound(upper.begin(), upper.end(), total * b / blocks) - upper.begin();
  }
  buffer_.resize(blocks * static_cast<std::size_t>(n));

  // The check: the product of check_vector() each way.
  Eigen::VectorXd half;
  usable_ = true;
  multiply(check_vector(n), &half);
  for (Eigen::Index i = 0; i < n && usable_; ++i) {
    usable_ = std::abs(half[i] - whole_check[i]) <= kAgreement * whole_check[i];
  }
}

void ReciprocalProduct::multiply(const Eigen::VectorXd& x, Eigen::VectorXd* y) const {
  const Eigen::Index n = F_.rows();
  const std::size_t blocks = block_.size() - 1;
  y->resize(n);
  scaled_ = area_.cwiseProduct(x);
  const auto* outer = F_.outerIndexPtr();
  const auto* column = F_.innerIndexPtr();
  const double* value = F_.valuePtr();
  const double* in = x.data();
  double* out = y->data();
  tbb::parallel_for(
      tbb::blocked_range<std::size_t>(0, blocks, 1),
      [&](const tbb::blocked_range<std::size_t>& range) {
        for (std::size_t b = range.begin(); b != range.end(); ++b) {
          double* buffer = buffer_.data() + b * static_cast<std::size_t>(n);
          std::fill(buffer + block_[b], buffer + n, 0.0);  // rows before it: never reached
          for (Eigen::Index i = block_[b]; i < block_[b + 1]; ++i) {
            out[i] = upper_row(first_[static_cast<std::size_t>(i)], outer[i + 1], i, column, value,
                               in, scaled_[i], buffer);
          }
        }
      },
      tbb::simple_partitioner());
  tbb::parallel_for(
      tbb::blocked_range<Eigen::Index>(0, n, 2048),
      [&](const tbb::blocked_range<Eigen::Index>& rows) {
        std::size_t last = 0;  // last block starting at or before row i
        for (Eigen::Index i = rows.begin(); i != rows.end(); ++i) {
          while (last + 1 < blocks && block_[last + 1] <= i) ++last;
          double from_left = 0;
          for (std::size_t b = 0; b <= last; ++b) {
            from_left += buffer_[b * static_cast<std::size_t>(n) + static_cast<std::size_t>(i)];
          }
          out[i] += from_left / area_[i];
        }
      });
}

}  // namespace exchange_detail
}  // namespace hearthray
