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

}  // namespace

ReciprocalProduct::ReciprocalProduct(const SparseMatrix& F, const Eigen::VectorXd& area)
    : F_(F), area_(area) {
  const Eigen::Index n = F.rows();
  if (n == 0 || F.cols() != n || area.size() != n || !F.isCompressed()) return;
  if (!(area.minCoeff() > 0)) return;
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

  // The check: fractional parts of multiples of the golden ratio, in [1, 2).
  Eigen::VectorXd x(n), whole, half;
  for (Eigen::Index i = 0; i < n; ++i) {
    const double t = 0.6180339887498949 * static_cast<double>(i);
    x[i] = 1 + (t - std::floor(t));
  }
  exchange_detail::multiply(F, x, &whole);
  usable_ = true;
  multiply(x, &half);
  for (Eigen::Index i = 0; i < n && usable_; ++i) {
    usable_ = std::abs(half[i] - whole[i]) <= kAgreement * whole[i];
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
            const double z = scaled_[i];
            auto k = first_[static_cast<std::size_t>(i)];
            double sum = 0;
            if (k < outer[i + 1] && column[k] == i) sum = value[k++] * in[i];
            for (; k < outer[i + 1]; ++k) {
              const auto j = column[k];
              sum += value[k] * in[j];
              buffer[j] += value[k] * z;
            }
            out[i] = sum;
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
