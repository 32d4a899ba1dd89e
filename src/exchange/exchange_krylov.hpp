// Private to the exchange solver: a deterministic parallel sparse product and a restarted
// Krylov solver for the large-problem path.
#pragma once

#include <Eigen/Dense>
#include <functional>

#include "hearthray/view_factors.hpp"

namespace hearthray {
namespace exchange_detail {

// y = F x. Rows run in parallel, but each row is summed by one thread in its stored order,
// so y is bitwise the same for any thread count.
void multiply(const SparseMatrix& F, const Eigen::VectorXd& x, Eigen::VectorXd* y);

// y1 = F x1 and y2 = F x2 in one pass over F (each bitwise as multiply would give it).
void multiply_two(const SparseMatrix& F, const Eigen::VectorXd& x1, const Eigen::VectorXd& x2,
                  Eigen::VectorXd* y1, Eigen::VectorXd* y2);
// The same for three vectors.
void multiply_three(const SparseMatrix& F, const Eigen::VectorXd& x1, const Eigen::VectorXd& x2,
                    const Eigen::VectorXd& x3, Eigen::VectorXd* y1, Eigen::VectorXd* y2,
                    Eigen::VectorXd* y3);

// out = A in, for a linear operator given as a function (never a stored matrix).
using LinearOperator = std::function<void(const Eigen::VectorXd& in, Eigen::VectorXd* out)>;

struct KrylovOptions {
  double tolerance = 1e-10;  // stop when ||b - A x||_2 <= tolerance ||b||_2
  int max_iterations = 1000;
  int restart = 100;  // GMRES(m): Krylov vectors kept before a restart
  // Weights a (null: none): each cycle then takes, of the x it can reach, the one of least
  // residual r = b - A x among those with a^T r = 0, rather than the least residual alone
  // (a linear constraint on the cycle's small least-squares problem, no further product); the
  // residual norm it watches is that x's. For a sum of the residual that must vanish far more
  // tightly than its norm (the exchange's net power of the radiosity residuals).
  const Eigen::VectorXd* zero_sum = nullptr;
};

struct KrylovSummary {
  bool converged = false;
  int iterations = 0;            // products with A
  double relative_residual = 0;  // ||b - A x||_2 / ||b||_2, of the x returned (see below)
  bool breakdown = false;        // A z = 0 for some z != 0: the operator is singular
};

// Restarted GMRES with right preconditioning (Saad & Schultz, SIAM J. Sci. Stat. Comput. 7,
// 1986; Saad, Iterative Methods for Sparse Linear Systems, 2nd ed., ch. 6 and 9; chapter
// numbers recalled from memory), so the norm it watches is the true residual of A x = b.
// Orthogonalisation by classical Gram-Schmidt applied twice (as stable as the modified form,
// and done as matrix-vector products). Starts from x = 0. `precondition` applies M^-1 (may be
// empty: none). Single-threaded apart from what the operator does, so the result does not
// depend on the thread count.
KrylovSummary gmres(const LinearOperator& A, const LinearOperator& precondition,
                    const Eigen::VectorXd& b, const KrylovOptions& options, Eigen::VectorXd* x);

// out = A in, and side = B in for a second linear map B of the same input (e.g. F in, where
// A in = in - W F in): what a caller needs of B x besides x.
using PairedOperator =
    std::function<void(const Eigen::VectorXd& in, Eigen::VectorXd* out, Eigen::VectorXd* side)>;

// The same GMRES on a paired operator, also giving Bx = B x. It keeps the products A z_j and
// B z_j of each cycle (2 more vectors per iteration) and, at a cycle's end, takes the residual
// b - A x and B x as the same combinations of them as x is of the z_j (by linearity) instead
// of one more product with A: when that residual plus a bound on its round-off is under the
// tolerance, the solve ends there; otherwise (near the tolerance, a tight tolerance, or at the
// end of the iterations) the residual and B x are measured by a product with x, as above.
KrylovSummary gmres(const PairedOperator& A, const LinearOperator& precondition,
                    const Eigen::VectorXd& b, const KrylovOptions& options, Eigen::VectorXd* x,
                    Eigen::VectorXd* Bx);

}  // namespace exchange_detail
}  // namespace hearthray
