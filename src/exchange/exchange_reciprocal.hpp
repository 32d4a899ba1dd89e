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
// Newton steps' linear solves (and, added up, the steps' residuals); the residuals that end a
// solve are measured with the whole F.
class ReciprocalProduct {
 public:
  // Lays out the blocks and checks the matrix: one product each way with a fixed vector of
  // varied positive values; usable() is false unless every row agrees to 1e-12 (a matrix
  // that is not reciprocal to round-off, or lacks mirrored entries).
  ReciprocalProduct(const SparseMatrix& F, const Eigen::VectorXd& area);
  // The same with F check_vector() already computed (by multiply(), or by a pass over F that
  // gives it bitwise as multiply() would: multiply_two, multiply_three), saving that pass.
  ReciprocalProduct(const SparseMatrix& F, const Eigen::VectorXd& area,
                    const Eigen::VectorXd& whole_check);
  // The vector of the check: fractional parts of multiples of the golden ratio, in [1, 2).
  static Eigen::VectorXd check_vector(Eigen::Index n);
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
