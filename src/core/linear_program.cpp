// Two-phase simplex on a dense tableau (see core/linear_program.hpp).
#include "core/linear_program.hpp"

#include <cmath>
#include <limits>
#include <vector>

#include "hearthray/error.hpp"

namespace hearthray {
namespace {

// The tableau: one row per constraint (coefficients, then the right-hand side), the basis
// column of each row, and the columns allowed to enter.
struct Tableau {
  Eigen::MatrixXd T;       // rows x (columns + 1)
  std::vector<int> basis;  // per row
  int columns = 0;

  double& rhs(int i) { return T(i, columns); }
  void pivot(int row, int col) {
    T.row(row) /= T(row, col);
    for (int i = 0; i < T.rows(); ++i)
      if (i != row && T(i, col) != 0) T.row(i) -= T(i, col) * T.row(row);
    basis[std::size_t(row)] = col;
  }
};

enum class Phase { optimal, unbounded };

// Minimises cost·(columns) over the tableau's basic feasible solutions, entering only columns
// below `allowed`. Bland's rule throughout.
Phase minimise(Tableau* t, const Eigen::VectorXd& cost, int allowed, double tol, int* pivots) {
  const int rows = int(t->T.rows());
  for (;;) {
    // Reduced costs: cost_j - sum over rows of cost(basis) * T(i, j).
    int enter = -1;
    for (int j = 0; j < allowed && enter < 0; ++j) {
      double reduced = cost(j);
      for (int i = 0; i < rows; ++i) reduced -= cost(t->basis[std::size_t(i)]) * t->T(i, j);
      if (reduced < -tol) enter = j;
    }
    if (enter < 0) return Phase::optimal;
    int leave = -1;
    double best = std::numeric_limits<double>::infinity();
    for (int i = 0; i < rows; ++i) {
      if (t->T(i, enter) <= tol) continue;
      const double ratio = t->rhs(i) / t->T(i, enter);
      const bool tie = leave >= 0 && std::abs(ratio - best) <= tol;
      if (leave < 0 || (ratio < best && !tie) ||
          (tie && t->basis[std::size_t(i)] < t->basis[std::size_t(leave)])) {
        best = std::min(best, ratio);
        leave = i;
      }
    }
    if (leave < 0) return Phase::unbounded;
    t->pivot(leave, enter);
    if (++*pivots > 100000) throw std::runtime_error("linear program: pivot limit passed");
  }
}

}  // namespace

LinearProgramResult solve_linear_program(const Eigen::VectorXd& c, const Eigen::MatrixXd& A,
                                         const Eigen::VectorXd& b, double tolerance) {
  const int n = int(c.size()), m = int(A.rows());
  if (A.cols() != n || b.size() != m)
    throw std::invalid_argument("linear program: A must be rows x variables, b one per row");
  if (!c.allFinite() || !A.allFinite() || !b.allFinite())
    throw std::invalid_argument("linear program: data must be finite");
  // Columns: the variables, one slack per row, one artificial per row with b < 0.
  int artificials = 0;
  for (int i = 0; i < m; ++i) artificials += b(i) < 0;
  Tableau t;
  t.columns = n + m + artificials;
  t.T = Eigen::MatrixXd::Zero(m, t.columns + 1);
  t.basis.assign(std::size_t(m), 0);
  for (int i = 0, a = 0; i < m; ++i) {
    const double sign = b(i) < 0 ? -1 : 1;  // rows with b < 0 negated: -A x - s + art = -b
    t.T.row(i).head(n) = sign * A.row(i);
    t.T(i, n + i) = sign;
    t.rhs(i) = sign * b(i);
    if (b(i) < 0) {
      t.T(i, n + m + a) = 1;
      t.basis[std::size_t(i)] = n + m + a++;
    } else {
      t.basis[std::size_t(i)] = n + i;
    }
  }
  LinearProgramResult result;
  if (artificials > 0) {  // phase 1: the sum of the artificials to zero
    Eigen::VectorXd cost = Eigen::VectorXd::Zero(t.columns);
    cost.tail(artificials).setOnes();
    minimise(&t, cost, t.columns, tolerance, &result.pivots);
    double left = 0;
    for (int i = 0; i < m; ++i)
      if (t.basis[std::size_t(i)] >= n + m) left += t.rhs(i);
    if (left > tolerance * std::max(1.0, b.cwiseAbs().maxCoeff())) return result;  // infeasible
    // Artificials still basic at zero: pivot them out on any other column (else the row is
    // redundant and stays, its artificial never entering again).
    for (int i = 0; i < m; ++i) {
      if (t.basis[std::size_t(i)] < n + m) continue;
      for (int j = 0; j < n + m; ++j)
        if (std::abs(t.T(i, j)) > tolerance) {
          t.pivot(i, j);
          break;
        }
    }
  }
  Eigen::VectorXd cost = Eigen::VectorXd::Zero(t.columns);
  cost.head(n) = c;
  if (minimise(&t, cost, n + m, tolerance, &result.pivots) == Phase::unbounded) {
    result.status = LinearProgramStatus::unbounded;
    return result;
  }
  result.status = LinearProgramStatus::optimal;
  result.x = Eigen::VectorXd::Zero(n);
  for (int i = 0; i < m; ++i)
    if (t.basis[std::size_t(i)] < n) result.x(t.basis[std::size_t(i)]) = t.rhs(i);
  result.objective = c.dot(result.x);
  return result;
}

}  // namespace hearthray
