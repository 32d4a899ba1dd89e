// The small simplex solver of the heating plan (core/linear_program.hpp) against textbook
// linear programs with known optima, and against enumerating the vertices of random small
// problems.
#include <catch2/catch.hpp>
#include <cmath>
#include <random>

#include "core/linear_program.hpp"

using hearthray::LinearProgramStatus;
using hearthray::solve_linear_program;

TEST_CASE("linear program: a product-mix maximum at the vertex (2, 6)", "[linear-program]") {
  // Hillier & Lieberman, Introduction to Operations Research, the Wyndor Glass Co. example
  // (ch. 3; recalled): maximise 3 x1 + 5 x2 subject to x1 <= 4, 2 x2 <= 12, 3 x1 + 2 x2 <= 18;
  // optimum x = (2, 6), Z = 36.
  Eigen::MatrixXd A(3, 2);
  A << 1, 0, 0, 2, 3, 2;
  const auto r = solve_linear_program(Eigen::Vector2d(-3, -5), A, Eigen::Vector3d(4, 12, 18));
  REQUIRE(r.status == LinearProgramStatus::optimal);
  CHECK(r.x(0) == Approx(2).margin(1e-12));
  CHECK(r.x(1) == Approx(6).margin(1e-12));
  CHECK(-r.objective == Approx(36));
}

TEST_CASE("linear program: >= and = rows need the first phase", "[linear-program]") {
  // Hillier & Lieberman, the radiation-therapy design example (ch. 3; recalled): minimise
  // 0.4 x1 + 0.5 x2 subject to 0.3 x1 + 0.1 x2 <= 2.7, 0.5 x1 + 0.5 x2 = 6,
  // 0.6 x1 + 0.4 x2 >= 6; optimum x = (7.5, 4.5), Z = 5.25.
  Eigen::MatrixXd A(4, 2);
  A << 0.3, 0.1, 0.5, 0.5, -0.5, -0.5, -0.6, -0.4;  // = as two rows, >= negated
  const auto r =
      solve_linear_program(Eigen::Vector2d(0.4, 0.5), A, Eigen::Vector4d(2.7, 6, -6, -6));
  REQUIRE(r.status == LinearProgramStatus::optimal);
  CHECK(r.x(0) == Approx(7.5).margin(1e-9));
  CHECK(r.x(1) == Approx(4.5).margin(1e-9));
  CHECK(r.objective == Approx(5.25));
}

TEST_CASE("linear program: infeasible and unbounded problems are told apart", "[linear-program]") {
  Eigen::MatrixXd A(2, 1);
  A << -1, 1;  // x >= 2 and x <= 1
  CHECK(solve_linear_program(Eigen::VectorXd::Ones(1), A, Eigen::Vector2d(-2, 1)).status ==
        LinearProgramStatus::infeasible);
  Eigen::MatrixXd B(1, 2);
  B << 1, -1;  // x1 - x2 <= 1: minimising -x1 runs off along x1 = x2 + 1
  CHECK(solve_linear_program(Eigen::Vector2d(-1, 0), B, Eigen::VectorXd::Ones(1)).status ==
        LinearProgramStatus::unbounded);
}

TEST_CASE("linear program: random small problems agree with enumerating the vertices",
          "[linear-program]") {
  // Three variables, six rows plus x >= 0: every vertex is where three of the nine planes
  // meet; the least objective over the feasible vertices is the optimum (the box row keeps
  // the problem bounded). Fixed seed.
  std::mt19937_64 rng(7);
  std::uniform_real_distribution<double> u(-1, 1);
  int checked = 0;
  for (int trial = 0; trial < 200; ++trial) {
    Eigen::MatrixXd A(7, 3);
    Eigen::VectorXd b(7), c(3);
    for (int i = 0; i < 6; ++i) {
      for (int j = 0; j < 3; ++j) A(i, j) = u(rng);
      b(i) = u(rng) + 0.3;
    }
    A.row(6).setOnes();
    b(6) = 5;
    for (int j = 0; j < 3; ++j) c(j) = u(rng);
    Eigen::MatrixXd planes(10, 3);
    Eigen::VectorXd level(10);
    planes << A, Eigen::MatrixXd(-Eigen::MatrixXd::Identity(3, 3));
    level << b, Eigen::VectorXd::Zero(3);
    double best = INFINITY;
    for (int i = 0; i < 10; ++i)
      for (int j = i + 1; j < 10; ++j)
        for (int k = j + 1; k < 10; ++k) {
          Eigen::Matrix3d M;
          M << planes.row(i), planes.row(j), planes.row(k);
          if (std::abs(M.determinant()) < 1e-9) continue;
          const Eigen::Vector3d x =
              M.fullPivLu().solve(Eigen::Vector3d(level(i), level(j), level(k)));
          if (((planes * x - level).array() <= 1e-9).all()) best = std::min(best, c.dot(x));
        }
    const auto r = solve_linear_program(c, A, b);
    if (!std::isfinite(best)) {
      CHECK(r.status == LinearProgramStatus::infeasible);
      continue;
    }
    REQUIRE(r.status == LinearProgramStatus::optimal);
    CHECK(r.objective == Approx(best).margin(1e-9));
    CHECK(((A * r.x - b).array() <= 1e-9).all());
    CHECK((r.x.array() >= -1e-12).all());
    ++checked;
  }
  CHECK(checked > 50);  // many random problems are feasible (87 of the 200 with this seed)
}
