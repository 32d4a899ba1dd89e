// A small dense linear program: minimise c·x subject to A x <= b and x >= 0, by the two-phase
// simplex method on a tableau with Bland's rule (smallest index enters and leaves: no cycling,
// and the same answer on every machine). Meant for a few tens of variables and a few hundred
// rows, as the heating plan's split of power between panels needs (heating_plan.cpp); not for
// large or badly scaled problems: scale the variables to order one first.
#pragma once

#include <Eigen/Dense>

namespace hearthray {

enum class LinearProgramStatus { optimal, infeasible, unbounded };

struct LinearProgramResult {
  LinearProgramStatus status = LinearProgramStatus::infeasible;
  Eigen::VectorXd x;     // optimal: the minimiser
  double objective = 0;  // optimal: c·x
  int pivots = 0;
};

// `tolerance` is the size below which reduced costs, pivots and the phase-1 objective count
// as zero (relative to order-one data).
LinearProgramResult solve_linear_program(const Eigen::VectorXd& c, const Eigen::MatrixXd& A,
                                         const Eigen::VectorXd& b, double tolerance = 1e-9);

}  // namespace hearthray
