// Private to the exchange solver's large path: products with a view-factor matrix whose
// exchange areas are symmetric (A_i F_ij = A_j F_ji, the smoothed factors), reading only the
// entries on and right of the diagonal, half the bytes of a whole product.
#pragma once

#include <Eigen/Dense>
#include <vector>

#include "hearthray/view_factors.hpp"

namespace hearthray {
namespace exchange_detail {

// y = F x with the entries left of the diagonal taken from their mirrors:
//   y_i = sum_{j >= i} F_ij x_j + (sum_{j < i} F_ji A_j x_j) / A_i,
// equal to F x up to round-off when the exchange areas are symmetric. The second sum is
// scattered by fixed blocks of rows (set by F alone) into per-block buffers added in block
// order, so y is bitwise the same for any thread count. Products with this operator serve the
// Newton steps' linear solves only; residuals are always measured with the whole F.
class ReciprocalProduct {
 public:
  // Lays out the blocks and checks the matrix: one product each way with a fixed vector of
  // varied positive values; usable() is false unless every row agrees to 1e-12 (a matrix
  // that is not reciprocal to round-off, or lacks mirrored entries).
  ReciprocalProduct(const SparseMatrix& F, const Eigen::VectorXd& area);
  bool usable() const { return usable_; }
  void multiply(const Eigen::VectorXd& x, Eigen::VectorXd* y) const;

 private:
  const SparseMatrix& F_;
  Eigen::VectorXd area_;
  std::vector<SparseMatrix::StorageIndex> first_;  // per row: first entry at or right of i
  std::vector<Eigen::Index> block_;                // row boundaries of the fixed blocks
  mutable std::vector<double> buffer_;             // per block: n scattered sums
  mutable Eigen::VectorXd scaled_;                 // A_i x_i
  bool usable_ = false;
};

}  // namespace exchange_detail
}  // namespace hearthray
