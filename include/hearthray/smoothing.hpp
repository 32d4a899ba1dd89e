// Smoothing: corrects Monte Carlo view factors so that reciprocity (A_i F_ij = A_j F_ji)
// holds to round-off, every row (surroundings and back-face losses included) sums to one,
// no entry is negative and structural zeros stay zero.
//
// Method: constrained maximum-likelihood estimation (Daun, Morton & Howell, "Smoothing Monte
// Carlo exchange factors through constrained maximum likelihood estimation", J. Heat Transfer
// 127(10), 2005): maximise sum_ij N_ij ln F_ij subject to the constraints. The stationary
// point gives exchange areas S_ij = A_i F_ij = (N_ij + N_ji) / (mu_i + mu_j), and
// S_i,surroundings = N_i,s / mu_i, with one multiplier mu_i per row found by Newton's method
// on the row-sum equations sum_j S_ij = A_i. Above 100 patches each Newton system is solved
// matrix-free by conjugate gradients (inexact Newton): time and memory per iteration
// grow with the number of non-zero tallies, and the result does not depend on the thread count.
#pragma once

#include <string>

#include "hearthray/view_factors.hpp"

namespace hearthray {

struct SmoothingOptions {
  double tolerance = 1e-13;  // stop when every |row sum - 1| is below this
  int max_iterations = 100;  // Newton iterations on the multipliers
  // How each Newton system is solved. automatic: dense LDL^T (exact steps) up to 100 patches,
  // matrix-free preconditioned conjugate gradients above. direct / iterative force one of the
  // two, to compare them; direct needs n^2 memory and is refused above 4000 patches.
  enum class Solver { automatic, direct, iterative } solver = Solver::automatic;

  bool IsValid(std::string* error) const;
};

struct SmoothingSummary {
  bool converged = false;
  int iterations = 0;                // Newton iterations
  int linear_iterations = 0;         // conjugate-gradient iterations of all Newton steps
  double max_row_error = 0;          // max_i |sum_j F_ij + F_is + F_ib - 1|
  double max_reciprocity_error = 0;  // max |A_i F_ij - A_j F_ji| / max(A_i F_ij)
  double max_correction_sigma = 0;   // max |F - F_raw| / sigma, sigma from the larger value
  std::string message;
};

// Requires tallies of all emitters (a full square matrix): shards not yet merged are a
// programming mistake (std::invalid_argument).
ViewFactors smooth_view_factors(const PatchSet& patches, const Tallies& tallies,
                                const SmoothingOptions& options, SmoothingSummary* summary);

}  // namespace hearthray
