// Private to smoothing (smoothing.cpp): the counts of one maximum-likelihood smoothing problem
// laid out for passes that cost O(non-zeros), and those passes (smoothing_problem.cpp; finish()
// in smoothing_finish.cpp; the fixed blocks of rows they share in smoothing_blocks.hpp).
//
// The counts form a symmetric pair list: every pair i < j with n_ij = N_ij + N_ji > 0, row by
// row in ascending j (upper-triangular compressed rows), plus per-patch terms. To keep memory
// at the size of the result, the list lives in the storage of the result matrix F, which ends
// up with two entries per pair plus the diagonal: partner j in F's column indices [0, pairs),
// n_ij in its values [0, pairs), and the Hessian weights w_ij in single precision in the
// first half of values [pairs, 2 pairs). The conjugate-gradient products, bound by reading the
// pairs, so read 8 bytes a pair rather than 12; the Newton gradient (the row sums) stays in
// double precision, so only the step direction is approximate (to about 1e-7, far inside the
// forcing terms) and the answer is the same. While the list is built, the rays each row
// received from later rows are gathered into values [pairs, 2 pairs) too (fewer senders than
// pairs). finish() then rewrites F in place into the final symmetric pattern, the entries left
// of the diagonal by blocks of destination rows, so that each block's writes stay in cache.
//
// Every pass runs over fixed blocks of rows (set by the counts alone); sums that cross rows go
// to per-block buffers added in block order, so results never depend on the thread count.
#pragma once

#include <Eigen/Core>
#include <cstdint>
#include <vector>

#include "hearthray/view_factors.hpp"

namespace hearthray {
namespace smoothing_detail {

struct Problem {
  std::size_t n = 0;
  std::size_t pairs = 0;
  SparseMatrix F;                        // the storage described above until finish()
  std::vector<std::uint64_t> row_begin;  // n + 1: row i's pairs are [row_begin[i], row_begin[i+1])
  // Per row j: partners i < j, the final layout's entries left of the diagonal.
  std::vector<SparseMatrix::StorageIndex> lower;
  // Per patch: self hits N_ii, escaped and back-face rays, their sum c_i, and the area.
  Eigen::VectorXd self, escaped, back, lumped, area;
  Eigen::VectorXd own_weight;      // c_i / mu_i^2 at the last row_sums()
  std::vector<std::size_t> block;  // row boundaries of the fixed blocks (size blocks + 1)
  std::vector<double> scratch;     // per-block accumulators of the passes

  const int* partner() const { return F.innerIndexPtr(); }
  const double* count() const { return F.valuePtr(); }
  // The Hessian weights in single precision, in the first half of values [pairs, 2 pairs).
  const float* weight() const { return reinterpret_cast<const float*>(F.valuePtr() + pairs); }
  float* weight() { return reinterpret_cast<float*>(F.valuePtr() + pairs); }
};

// Builds the pair list from checked tallies of all emitters. Throws InputError for a patch that
// no counted ray left or reached.
Problem make_problem(const PatchSet& patches, const Tallies& tallies);

// At multipliers mu: the row sums of the exchange areas R_i = sum_j n_ij / (mu_i + mu_j) +
// c_i / mu_i, and the Hessian diagonal H_ii = sum_j w_ij + c_i / mu_i^2 with
// w_ij = n_ij / (mu_i + mu_j)^2 (summed in double precision); keeps the w_ij (rounded to
// float) and c_i / mu_i^2 for hessian_times().
void row_sums(Problem& p, const Eigen::VectorXd& mu, Eigen::VectorXd* R, Eigen::VectorXd* H_diag);

// y = H v, (H v)_i = c_i / mu_i^2 v_i + sum_j w_ij (v_i + v_j), with the weights of the last
// row_sums().
void hessian_times(Problem& p, const Eigen::VectorXd& v, Eigen::VectorXd* y);

// The dense Hessian from the weights of the last row_sums() (small problems only).
Eigen::MatrixXd dense_hessian(const Problem& p, const Eigen::VectorXd& H_diag);

// Largest step (up to 1) along delta that keeps 5 % of every logarithm's argument of the
// likelihood: mu_i + mu_j for the pairs, mu_i where c_i > 0.
double step_to_boundary(Problem& p, const Eigen::VectorXd& mu, const Eigen::VectorXd& delta);

// Measured on the finished matrix (what the user receives).
struct Measures {
  double max_row_error = 0;
  double max_reciprocity_error = 0;
  double max_correction_sigma = 0;
};

// Writes the result into vf (F, to_surroundings, to_back_faces, error_ratio; other fields
// untouched): F_ij = S_ij / A_i with S_ij = n_ij / (mu_i + mu_j), S_ii = N_ii / mu_i, on the
// pattern of the counts, and the replicate_error_ratio of the tallies (empty without
// replicates). Consumes p.F.
Measures finish(Problem& p, const Eigen::VectorXd& mu, const Tallies& tallies, ViewFactors* vf);

}  // namespace smoothing_detail
}  // namespace hearthray
