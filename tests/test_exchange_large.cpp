// The exchange solver's large path (sparse Newton-Krylov) against its dense path (LU of the
// radiosity matrix, Newton on the node temperatures alone) on the same problems, each path
// forced through ExchangeOptions::dense_face_limit; the energy balance of closed enclosures;
// reported non-convergence; independence from the thread count; the GMRES helper itself; the
// products from half of a reciprocal F that the linear solves use for smoothed factors; and the
// two-level preconditioner (the same answer in fewer iterations, in a long tube whose factors
// come from a closed form).
// The problems are synthetic (random sparse symmetric exchange areas: reciprocity exact by
// construction), common practice for checking one solver against another; no published
// source. The two paths share only the input checks and the final flux formula, so agreement
// to 1e-8 is a real check of the Newton-Krylov solve.
#include <tbb/global_control.h>
#include <tbb/task_arena.h>

#include <Eigen/Dense>
#include <Eigen/SparseCore>
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <random>
#include <string>
#include <vector>

#include "../src/exchange/exchange_coarse.hpp"
#include "../src/exchange/exchange_krylov.hpp"
#include "../src/exchange/exchange_reciprocal.hpp"
#include "hearthray/exchange.hpp"
#include "hearthray/units.hpp"

using namespace hearthray;

namespace {

// n faces with about `partners` random partners each: S symmetric, no self-view. Face i loses
// a random share (up to open_fraction) of its radiation out of the scene, split between
// escape and back faces; A_i = (row sum of S) / (1 - lost_i), so A_i F_ij = S_ij exactly.
ViewFactors random_enclosure(int n, int partners, double open_fraction, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> unit(0.0, 1.0);
  std::vector<Eigen::Triplet<double>> s;
  for (int i = 0; i < n; ++i) {
    for (int k = 0; k < partners / 2; ++k) {
      int j = int(unit(rng) * (n - 1)) % (n - 1);
      if (j >= i) ++j;
      const double w = 0.05 + unit(rng);
      s.emplace_back(i, j, w);
      s.emplace_back(j, i, w);
    }
  }
  SparseMatrix S(n, n);
  S.setFromTriplets(s.begin(), s.end());
  const Eigen::VectorXd row = S * Eigen::VectorXd::Ones(n);
  ViewFactors vf;
  Eigen::VectorXd inverse_area(n);
  for (int i = 0; i < n; ++i) {
    const double lost = open_fraction * unit(rng);
    vf.areas.push_back(row[i] / (1 - lost));
    inverse_area[i] = 1 / vf.areas[i];
    vf.names.push_back("p" + std::to_string(i));
    vf.to_surroundings.push_back(0.7 * lost);
    vf.to_back_faces.push_back(lost - 0.7 * lost);
  }
  vf.rays.assign(n, 0);
  vf.F = inverse_area.asDiagonal() * S;
  return vf;
}

enum class Mix { fixed_only, inputs, conduction };

// Node k's condition: fixed temperatures only, or fixed / power / heat flux / adiabatic in
// turn, with convection and wall losses on some in the `conduction` mix.
NodeCondition condition(Mix mix, int k, std::mt19937_64& rng) {
  std::uniform_real_distribution<double> unit(0.0, 1.0);
  NodeCondition c;
  const int kind = mix == Mix::fixed_only ? 0 : k % 4;
  switch (kind) {
    case 0:
      c = {ConditionKind::temperature, 400 + 900 * unit(rng), {}, {}};
      break;
    case 1:
      c = {ConditionKind::power, 50 + 200 * unit(rng), {}, {}};
      break;
    case 2:
      c = {ConditionKind::heat_flux, 1000 * unit(rng), {}, {}};
      break;
    default:
      c = {ConditionKind::adiabatic, 0, {}, {}};
  }
  if (mix == Mix::conduction && kind != 0 && k % 3 == 0) c.convection = Convection{12, 310};
  if (mix == Mix::conduction && k % 5 == 0) c.wall_loss = WallLoss{2.5, 290};
  return c;
}

// Faces [0, n) on nodes: `faces_per_node` consecutive faces per node (2: two-sided sheets),
// or, with `spread` > 0, face i on node i % spread (surfaces of many patches).
ExchangeProblem make_problem(const ViewFactors& vf, Mix mix, int faces_per_node, int spread,
                             std::uint64_t seed) {
  const int n = int(vf.areas.size());
  const int nodes = spread > 0 ? spread : (n + faces_per_node - 1) / faces_per_node;
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> unit(0.0, 1.0);
  ExchangeProblem p;
  p.view_factors = &vf;
  for (int k = 0; k < nodes; ++k)
    p.nodes.push_back({"n" + std::to_string(k), condition(mix, k, rng)});
  for (int i = 0; i < n; ++i) {
    const int node = spread > 0 ? i % spread : i / faces_per_node;
    p.faces.push_back({std::uint32_t(node), 0.2 + 0.8 * unit(rng)});
  }
  bool open = false;
  for (int i = 0; i < n; ++i) open = open || vf.to_surroundings[i] + vf.to_back_faces[i] > 0;
  if (open) p.surroundings_K = 300.0;
  return p;
}

ExchangeOptions forced(bool large, int faces) {
  ExchangeOptions o;
  o.dense_face_limit = large ? 0 : faces;
  return o;
}

// Both paths solve `p`; every reported quantity agrees to 1e-8, relative to itself for
// temperatures, radiosities and irradiations, and to the largest of its kind for flows (a net
// flow near zero, e.g. of a reradiating node, has no relative accuracy of its own).
void check_paths_agree(const ExchangeProblem& p) {
  const int n = int(p.faces.size());
  const ExchangeResult large = solve_exchange(p, forced(true, n));
  const ExchangeResult dense = solve_exchange(p, forced(false, n));
  INFO(large.BriefReport());
  INFO(dense.BriefReport());
  REQUIRE(large.status == ExchangeStatus::converged);
  REQUIRE(dense.status == ExchangeStatus::converged);
  REQUIRE(large.iterative);
  REQUIRE_FALSE(dense.iterative);
  CHECK(large.linear_iterations > 0);
  CHECK(dense.linear_iterations == 0);
  double flow = 0, flux = 0;
  for (const NodeResult& node : dense.nodes) {
    flow = std::max({flow, std::abs(node.net_radiation_W), std::abs(node.heat_input_W)});
  }
  for (const FaceResult& f : dense.faces) flux = std::max(flux, std::abs(f.net_flux));
  const double rel = 1e-8;
  for (std::size_t k = 0; k < p.nodes.size(); ++k) {
    CHECK(large.nodes[k].temperature_K == Approx(dense.nodes[k].temperature_K).epsilon(rel));
    CHECK(large.nodes[k].net_radiation_W ==
          Approx(dense.nodes[k].net_radiation_W).margin(rel * flow));
    CHECK(large.nodes[k].heat_input_W == Approx(dense.nodes[k].heat_input_W).margin(rel * flow));
    CHECK(large.nodes[k].convection_W == Approx(dense.nodes[k].convection_W).margin(rel * flow));
    CHECK(large.nodes[k].wall_loss_W == Approx(dense.nodes[k].wall_loss_W).margin(rel * flow));
  }
  for (int i = 0; i < n; ++i) {
    CHECK(large.faces[i].radiosity == Approx(dense.faces[i].radiosity).epsilon(rel));
    CHECK(large.faces[i].irradiation == Approx(dense.faces[i].irradiation).epsilon(rel));
    CHECK(large.faces[i].net_flux == Approx(dense.faces[i].net_flux).margin(rel * flux));
  }
  CHECK(large.surroundings_W == Approx(dense.surroundings_W).margin(rel * flow));
  CHECK(large.final_residual_W <= 1e-9 * flow);
}

double largest_flow(const ExchangeResult& r) {
  double largest = 0;
  for (const NodeResult& node : r.nodes)
    largest = std::max(largest, std::abs(node.net_radiation_W));
  return largest;
}

}  // namespace

TEST_CASE("large and dense paths agree: fixed temperatures, closed enclosure", "[exchange]") {
  const ViewFactors vf = random_enclosure(400, 40, 0.0, 11);
  check_paths_agree(make_problem(vf, Mix::fixed_only, 1, 0, 12));
}

TEST_CASE("large and dense paths agree: powers, heat fluxes and adiabatic nodes", "[exchange]") {
  const ViewFactors vf = random_enclosure(400, 40, 0.0, 21);
  check_paths_agree(make_problem(vf, Mix::inputs, 1, 0, 22));
}

TEST_CASE("large and dense paths agree: convection and wall losses", "[exchange]") {
  const ViewFactors vf = random_enclosure(400, 40, 0.0, 31);
  check_paths_agree(make_problem(vf, Mix::conduction, 1, 0, 32));
}

TEST_CASE("large and dense paths agree: two-sided sheets (two faces on a node)", "[exchange]") {
  const ViewFactors vf = random_enclosure(400, 40, 0.0, 41);
  check_paths_agree(make_problem(vf, Mix::conduction, 2, 0, 42));
}

TEST_CASE("large and dense paths agree: open scene with surroundings and back faces",
          "[exchange]") {
  const ViewFactors vf = random_enclosure(400, 40, 0.3, 51);
  check_paths_agree(make_problem(vf, Mix::conduction, 1, 0, 52));
}

TEST_CASE("large and dense paths agree: surfaces of many faces", "[exchange]") {
  const ViewFactors vf = random_enclosure(600, 30, 0.1, 61);
  check_paths_agree(make_problem(vf, Mix::conduction, 1, 24, 62));
}

TEST_CASE("the large path balances closed enclosures to 1e-9 of the largest heat flow",
          "[exchange]") {
  // One node per face (patches with their own temperatures) and 12 surfaces of 250 faces each
  // (a node's black-body emission is then far above its net flow: the balance must still
  // close against the net flow).
  const ViewFactors vf = random_enclosure(3000, 60, 0.0, 71);
  for (int spread : {0, 12}) {
    for (Mix mix : {Mix::fixed_only, Mix::inputs, Mix::conduction}) {
      const ExchangeProblem p = make_problem(vf, mix, 1, spread, 72);
      const ExchangeResult r = solve_exchange(p, forced(true, 3000));
      INFO(r.BriefReport());
      INFO("nodes " << p.nodes.size());
      REQUIRE(r.status == ExchangeStatus::converged);
      const double largest = largest_flow(r);
      REQUIRE(largest > 0);
      CHECK(std::abs(r.balance_W) <= 1e-9 * largest);
      CHECK(r.surroundings_W == 0);
      // Heat put in equals heat taken out by convection and wall losses.
      double input = 0, conducted = 0, scale = 0;
      for (const NodeResult& n : r.nodes) {
        input += n.heat_input_W;
        conducted += n.convection_W + n.wall_loss_W;
        scale = std::max(scale, std::abs(n.heat_input_W));
      }
      CHECK(std::abs(input - conducted) <= 1e-9 * std::max(largest, scale));
      CHECK(r.final_residual_W <= 1e-9 * largest);
    }
  }
}

TEST_CASE("the large path reports non-convergence instead of throwing", "[exchange]") {
  const ViewFactors vf = random_enclosure(300, 30, 0.0, 81);
  const ExchangeProblem p = make_problem(vf, Mix::conduction, 1, 0, 82);
  ExchangeOptions o = forced(true, 300);

  SECTION("too few Newton iterations") {
    o.max_iterations = 1;
    ExchangeResult r;
    REQUIRE_NOTHROW(r = solve_exchange(p, o));
    CHECK(r.status == ExchangeStatus::not_converged);
    CHECK(r.iterations == 1);
    CHECK_THAT(r.message, Catch::Contains("did not converge in 1 iterations"));
    CHECK(r.final_residual_W > 1e-9 * largest_flow(r));
    CHECK_THAT(r.BriefReport(), Catch::Contains("NOT CONVERGED"));
  }
  SECTION("too few linear iterations") {
    o.max_linear_iterations = 2;
    const ExchangeResult r = solve_exchange(p, o);
    CHECK(r.status == ExchangeStatus::not_converged);
    CHECK_THAT(r.message, Catch::Contains("linear solve of Newton step 1"));
    CHECK_THAT(r.message, Catch::Contains("max_linear_iterations"));
    CHECK(r.linear_iterations == 2);
    CHECK(r.linear_residual > 0);
  }
  SECTION("a heat input no positive temperature can balance") {
    // Radiation only: taking 1 GW out of one patch has no solution.
    ExchangeProblem q = make_problem(vf, Mix::inputs, 1, 0, 82);
    q.nodes[1].condition = {ConditionKind::power, -1e9, {}, {}};
    const ExchangeResult r = solve_exchange(q, o);
    CHECK(r.status == ExchangeStatus::not_converged);
    CHECK_THAT(r.message, Catch::Contains("no solution with positive temperatures") &&
                              Catch::Contains("'n1'"));
  }
}

TEST_CASE("the large path reports a singular system as a status", "[exchange]") {
  // Not physical: F_11 = 2 with eps = 0.5 makes I - (1 - eps) F zero (as in test_exchange.cpp
  // for the dense path).
  ViewFactors vf;
  vf.names = {"p0"};
  vf.areas = {1.0};
  vf.rays = {0};
  vf.F.resize(1, 1);
  vf.F.insert(0, 0) = 2.0;
  vf.F.makeCompressed();
  ExchangeProblem p;
  p.view_factors = &vf;
  p.nodes = {{"s0", {ConditionKind::temperature, 400.0, {}, {}}}};
  p.faces = {{0, 0.5}};
  const ExchangeResult r = solve_exchange(p, forced(true, 1));
  CHECK(r.iterative);
  CHECK(r.status == ExchangeStatus::singular);
  CHECK_THAT(r.message, Catch::Contains("singular"));
}

TEST_CASE("the large path gives bitwise the same result for any thread count", "[exchange]") {
  const ViewFactors vf = random_enclosure(2000, 60, 0.1, 91);
  ExchangeProblem p = make_problem(vf, Mix::conduction, 1, 0, 92);
  // Centres (random, some shared) for the preconditioner's aggregates: cut by coordinates.
  std::mt19937_64 rng(93);
  std::uniform_int_distribution<int> grid(0, 20);
  for (std::size_t i = 0; i < p.faces.size(); ++i) {
    p.face_centres.push_back(Vec3{double(grid(rng)), double(grid(rng)), 0.5 * grid(rng)});
  }
  auto solve_with = [&](int threads) {
    tbb::global_control allow(tbb::global_control::max_allowed_parallelism, threads);
    tbb::task_arena arena(threads);
    ExchangeResult r;
    arena.execute([&] { r = solve_exchange(p, forced(true, 2000)); });
    return r;
  };
  const ExchangeResult one = solve_with(1), four = solve_with(4);
  REQUIRE(one.status == ExchangeStatus::converged);
  CHECK(one.iterations == four.iterations);
  CHECK(one.linear_iterations == four.linear_iterations);
  bool same = true;
  for (std::size_t i = 0; i < p.faces.size(); ++i) {
    same = same && one.faces[i].radiosity == four.faces[i].radiosity &&
           one.faces[i].net_flux == four.faces[i].net_flux;
  }
  for (std::size_t k = 0; k < p.nodes.size(); ++k) {
    same = same && one.nodes[k].temperature_K == four.nodes[k].temperature_K;
  }
  CHECK(same);
  CHECK(one.balance_W == four.balance_W);
}

TEST_CASE("options of the large path are checked", "[exchange]") {
  std::string why;
  ExchangeOptions o;
  CHECK(o.IsValid(&why));
  o.linear_tolerance = 0;
  CHECK_FALSE(o.IsValid(&why));
  CHECK_THAT(why, Catch::Contains("linear_tolerance"));
  o = ExchangeOptions{};
  o.max_linear_iterations = 0;
  CHECK_FALSE(o.IsValid(&why));
  CHECK_THAT(why, Catch::Contains("max_linear_iterations"));
  o = ExchangeOptions{};
  o.gmres_restart = 0;
  CHECK_FALSE(o.IsValid(&why));
  CHECK_THAT(why, Catch::Contains("gmres_restart"));
  o = ExchangeOptions{};
  o.coarse_aggregates = -1;
  CHECK_FALSE(o.IsValid(&why));
  CHECK_THAT(why, Catch::Contains("coarse_aggregates"));
}

namespace {

// A diagonally dominant non-symmetric n x n matrix and a right-hand side, from rng.
void dominant_system(int n, std::mt19937_64* rng, Eigen::MatrixXd* A, Eigen::VectorXd* b) {
  std::uniform_real_distribution<double> unit(-1.0, 1.0);
  A->resize(n, n);
  for (int i = 0; i < n; ++i) {
    for (int j = 0; j < n; ++j) (*A)(i, j) = unit(*rng) / n;
    (*A)(i, i) += 1.0 + 0.5 * (i % 7);
  }
  b->resize(n);
  for (int i = 0; i < n; ++i) (*b)[i] = unit(*rng);
}

}  // namespace

TEST_CASE("GMRES solves a non-symmetric system to its stated residual", "[exchange]") {
  using exchange_detail::gmres;
  using exchange_detail::KrylovOptions;
  using exchange_detail::LinearOperator;
  // A diagonally dominant non-symmetric matrix; the reference is a dense LU solve.
  const int n = 200;
  std::mt19937_64 rng(5);
  Eigen::MatrixXd A;
  Eigen::VectorXd b;
  dominant_system(n, &rng, &A, &b);
  const Eigen::VectorXd reference = A.partialPivLu().solve(b);
  const LinearOperator op = [&](const Eigen::VectorXd& x, Eigen::VectorXd* y) { *y = A * x; };

  for (int restart : {3, 10, 100}) {
    KrylovOptions o;
    o.tolerance = 1e-12;
    o.restart = restart;
    Eigen::VectorXd x;
    const auto summary = gmres(op, LinearOperator(), b, o, &x);
    INFO("restart " << restart);
    CHECK(summary.converged);
    CHECK(summary.relative_residual <= 1e-12);
    CHECK((b - A * x).norm() <= 1e-12 * b.norm() * (1 + 1e-9));
    CHECK((x - reference).norm() <= 1e-10 * reference.norm());
  }
  // A preconditioner (the inverse diagonal) changes the path, not the answer.
  KrylovOptions o;
  o.tolerance = 1e-12;
  const Eigen::VectorXd inverse_diagonal = A.diagonal().cwiseInverse();
  const LinearOperator jacobi = [&](const Eigen::VectorXd& x, Eigen::VectorXd* y) {
    *y = inverse_diagonal.cwiseProduct(x);
  };
  Eigen::VectorXd x;
  CHECK(gmres(op, jacobi, b, o, &x).converged);
  CHECK((x - reference).norm() <= 1e-10 * reference.norm());
  // Out of iterations: reported, with the true residual.
  o.max_iterations = 2;
  o.restart = 1;
  const auto cut = gmres(op, LinearOperator(), b, o, &x);
  CHECK_FALSE(cut.converged);
  CHECK(cut.iterations == 2);
  CHECK(cut.relative_residual == Approx((b - A * x).norm() / b.norm()).epsilon(1e-12));
  CHECK(cut.relative_residual > 1e-12);
  CHECK_FALSE(cut.breakdown);
  // A singular operator (b outside its range) is a breakdown, not a loop to max_iterations.
  const LinearOperator projector = [](const Eigen::VectorXd& v, Eigen::VectorXd* y) {
    *y = v;
    (*y)[0] = 0;
  };
  Eigen::VectorXd e0 = Eigen::VectorXd::Zero(n);
  e0[0] = 1;
  const auto singular = gmres(projector, LinearOperator(), e0, KrylovOptions{}, &x);
  CHECK(singular.breakdown);
  CHECK_FALSE(singular.converged);
  CHECK(singular.iterations == 1);
}

TEST_CASE("GMRES on a paired operator gives B x and the residual from its products", "[exchange]") {
  using exchange_detail::gmres;
  using exchange_detail::KrylovOptions;
  using exchange_detail::LinearOperator;
  using exchange_detail::PairedOperator;
  // The same kind of system as above (reference: a dense LU solve) with a second map B, a
  // random dense matrix: B x must come out of the combination as B times the x returned, and
  // the residual reported must be the true one, at a loose tolerance (the residual from the
  // products, no product with x) and a tight one (measured by a product), with restarts.
  const int n = 200;
  std::mt19937_64 rng(7);
  Eigen::MatrixXd A, B(n, n);
  Eigen::VectorXd b;
  dominant_system(n, &rng, &A, &b);
  std::uniform_real_distribution<double> unit(-1.0, 1.0);
  for (int i = 0; i < n * n; ++i) B.data()[i] = unit(rng);
  const Eigen::VectorXd reference = A.partialPivLu().solve(b);
  int products = 0;
  const PairedOperator op = [&](const Eigen::VectorXd& x, Eigen::VectorXd* y,
                                Eigen::VectorXd* side) {
    ++products;
    *y = A * x;
    if (side != nullptr) *side = B * x;
  };
  for (double tolerance : {1e-6, 1e-13}) {
    for (int restart : {3, 100}) {
      KrylovOptions o;
      o.tolerance = tolerance;
      o.restart = restart;
      Eigen::VectorXd x, Bx;
      products = 0;
      const auto summary = gmres(op, LinearOperator(), b, o, &x, &Bx);
      INFO("tolerance " << tolerance << ", restart " << restart);
      const double true_residual = (b - A * x).norm() / b.norm();
      CHECK(summary.converged);
      CHECK(true_residual <= tolerance * (1 + 1e-6));
      CHECK(std::abs(summary.relative_residual - true_residual) <= 1e-14);
      CHECK((Bx - B * x).norm() <= 1e-12 * (B * x).norm());
      CHECK((x - reference).norm() <= 1e3 * tolerance * reference.norm());
      // At the loose tolerance with no restart the solve ends on the products alone.
      if (tolerance > 1e-9 && restart == 100) CHECK(products == summary.iterations);
      if (tolerance < 1e-9) CHECK(products > summary.iterations);
    }
  }
}

TEST_CASE("GMRES with a zero-sum constraint takes the least residual whose weighted sum is 0",
          "[exchange]") {
  namespace ex = exchange_detail;
  // Reference: after k steps from x = 0 without a restart, x lies in the Krylov space
  // K_k = span{b, A b, ..., A^(k-1) b}; the least ||b - A x|| over K_k with a^T (b - A x) = 0 is
  // found here independently, from an orthonormal basis Q of K_k (Householder QR) and the
  // Lagrange (KKT) system of that least-squares problem, solved densely.
  Eigen::MatrixXd A;
  Eigen::VectorXd b, a(120);  // a: positive weights, as the faces' areas
  std::mt19937_64 rng(11);
  std::uniform_real_distribution<double> share(0.5, 2.0);
  for (Eigen::Index i = 0; i < a.size(); ++i) a[i] = share(rng);
  dominant_system(int(a.size()), &rng, &A, &b);
  const Eigen::Index n = b.size();
  const ex::LinearOperator op = [&](const Eigen::VectorXd& x, Eigen::VectorXd* y) { *y = A * x; };
  const ex::PairedOperator paired = [&](const Eigen::VectorXd& x, Eigen::VectorXd* y,
                                        Eigen::VectorXd* side) {
    *y = A * x;
    if (side != nullptr) *side = 2 * x;
  };
  for (int k : {1, 2, 4, 6}) {
    Eigen::MatrixXd K(n, k);
    K.col(0) = b;
    for (int q = 1; q < k; ++q) K.col(q) = A * K.col(q - 1);
    const Eigen::MatrixXd Q = K.householderQr().householderQ() * Eigen::MatrixXd::Identity(n, k);
    const Eigen::MatrixXd AQ = A * Q;
    // [AQ^T AQ, AQ^T a; a^T AQ, 0] [y; mu] = [AQ^T b; a^T b]
    Eigen::MatrixXd kkt = Eigen::MatrixXd::Zero(k + 1, k + 1);
    kkt.topLeftCorner(k, k) = AQ.transpose() * AQ;
    kkt.topRightCorner(k, 1) = AQ.transpose() * a;
    kkt.bottomLeftCorner(1, k) = (AQ.transpose() * a).transpose();
    Eigen::VectorXd rhs(k + 1);
    rhs.head(k) = AQ.transpose() * b;
    rhs[k] = a.dot(b);
    const Eigen::VectorXd y = kkt.fullPivLu().solve(rhs);
    const double least = (b - AQ * y.head(k)).norm() / b.norm();
    ex::KrylovOptions o;
    o.tolerance = 1e-14;
    o.max_iterations = k;
    o.zero_sum = &a;
    Eigen::VectorXd x;
    const auto plain = ex::gmres(op, ex::LinearOperator(), b, o, &x);
    INFO("k " << k);
    const Eigen::VectorXd r = b - A * x;
    CHECK(std::abs(a.dot(r)) <= 1e-13 * a.norm() * b.norm());
    CHECK(r.norm() / b.norm() == Approx(least).epsilon(1e-9));
    CHECK(plain.relative_residual == Approx(r.norm() / b.norm()).epsilon(1e-12));
    // Unconstrained, the least residual over the same space is smaller (or equal).
    o.zero_sum = nullptr;
    ex::gmres(op, ex::LinearOperator(), b, o, &x);
    CHECK((b - A * x).norm() / b.norm() <= least * (1 + 1e-12));
    CHECK(std::abs(a.dot(b - A * x)) > 1e-10 * a.norm() * b.norm());
  }
  // Converged, with restarts and with the paired form (residual and B x from the products):
  // the stated residual holds and the weighted sum is 0 to round-off.
  for (int restart : {3, 100}) {
    ex::KrylovOptions o;
    o.tolerance = 1e-6;
    o.restart = restart;
    o.zero_sum = &a;
    Eigen::VectorXd x, Bx;
    const auto summary = ex::gmres(paired, ex::LinearOperator(), b, o, &x, &Bx);
    INFO("restart " << restart);
    const Eigen::VectorXd r = b - A * x;
    CHECK(summary.converged);
    CHECK(r.norm() <= 1e-6 * b.norm() * (1 + 1e-6));
    CHECK(std::abs(a.dot(r)) <= 1e-13 * a.norm() * b.norm());
    CHECK((Bx - 2 * x).norm() <= 1e-14 * x.norm());
  }
}

TEST_CASE("the coarse space's pass over F makes products bitwise as multiply does", "[exchange]") {
  const ViewFactors vf = random_enclosure(3000, 60, 0.1, 141);
  const ExchangeProblem p = make_problem(vf, Mix::conduction, 1, 0, 142);
  const exchange_detail::Setup s = exchange_detail::check_and_set_up(p);
  std::mt19937_64 rng(143);
  std::uniform_real_distribution<double> unit(-1.0, 1.0);
  Eigen::VectorXd x1(3000), x2(3000), x3(3000), y1, y2, y3, w1, w2, w3;
  for (int i = 0; i < 3000; ++i) x1[i] = unit(rng), x2[i] = 1e5 * unit(rng), x3[i] = 1;
  const exchange_detail::CoarseSpace coarse(s, 64, {{&x1, &x2, &x3}, {&y1, &y2, &y3}});
  CHECK(coarse.size() >= 32);
  exchange_detail::multiply(vf.F, x1, &w1);
  exchange_detail::multiply_two(vf.F, x2, x3, &w2, &w3);
  CHECK(y1 == w1);
  CHECK(y2 == w2);
  CHECK(y3 == w3);
  // Against Eigen's own product (another summation order): equal to round-off.
  CHECK((y2 - vf.F * x2).norm() <= 1e-14 * (vf.F.cwiseAbs() * x2.cwiseAbs()).norm());
}

TEST_CASE("products from half of a reciprocal F equal the whole product, for any thread count",
          "[exchange]") {
  // 6000 faces with about 100 partners each: some 300k entries right of the diagonal, so the
  // scattered sums come from 4 blocks of rows (2^16 entries each), added in block order.
  const ViewFactors vf = random_enclosure(6000, 100, 0.1, 101);
  const Eigen::VectorXd area = Eigen::Map<const Eigen::VectorXd>(vf.areas.data(), 6000);
  std::mt19937_64 rng(102);
  std::uniform_real_distribution<double> unit(-1.0, 1.0);
  Eigen::VectorXd x(6000);
  for (Eigen::Index i = 0; i < x.size(); ++i) x[i] = 1e5 * unit(rng);
  const Eigen::VectorXd whole = vf.F * x;
  const Eigen::VectorXd size = vf.F.cwiseAbs() * x.cwiseAbs();
  auto half_with = [&](int threads) {
    tbb::global_control allow(tbb::global_control::max_allowed_parallelism, threads);
    tbb::task_arena arena(threads);
    Eigen::VectorXd y;
    arena.execute([&] {
      const exchange_detail::ReciprocalProduct half(vf.F, area);
      REQUIRE(half.usable());
      half.multiply(x, &y);
    });
    return y;
  };
  const Eigen::VectorXd one = half_with(1), four = half_with(4);
  double worst = 0;
  for (Eigen::Index i = 0; i < x.size(); ++i) {
    worst = std::max(worst, std::abs(one[i] - whole[i]) / size[i]);
  }
  CHECK(worst <= 1e-14);  // A_i F_ij = S_ij to round-off of one division
  CHECK(worst > 0);       // the entries left of the diagonal really came from their mirrors
  CHECK(one == four);
}

TEST_CASE("products from half of F are refused for factors that are not reciprocal", "[exchange]") {
  ViewFactors vf = random_enclosure(3000, 60, 0.1, 111);
  const Eigen::VectorXd area = Eigen::Map<const Eigen::VectorXd>(vf.areas.data(), 3000);
  CHECK(exchange_detail::ReciprocalProduct(vf.F, area).usable());
  // One entry left of the diagonal off by 1e-9 of itself (far above round-off).
  for (SparseMatrix::InnerIterator it(vf.F, 1500); it; ++it) {
    if (it.col() < 1500) {
      it.valueRef() *= 1 + 1e-9;
      break;
    }
  }
  CHECK_FALSE(exchange_detail::ReciprocalProduct(vf.F, area).usable());
  // Areas that do not go with the factors (raw Monte Carlo factors are like this).
  Eigen::VectorXd other = area;
  other[7] *= 1.01;
  vf = random_enclosure(3000, 60, 0.1, 111);
  CHECK_FALSE(exchange_detail::ReciprocalProduct(vf.F, other).usable());
}

TEST_CASE(
    "smoothed factors (half products in the linear solves) give the same solution, "
    "bitwise for any thread count",
    "[exchange]") {
  ViewFactors vf = random_enclosure(6000, 100, 0.1, 121);
  const ExchangeProblem p = make_problem(vf, Mix::conduction, 1, 0, 122);
  auto solve_with = [&](int threads, bool smoothed) {
    vf.smoothed = smoothed;
    tbb::global_control allow(tbb::global_control::max_allowed_parallelism, threads);
    tbb::task_arena arena(threads);
    ExchangeResult r;
    arena.execute([&] { r = solve_exchange(p, forced(true, 6000)); });
    return r;
  };
  const ExchangeResult whole = solve_with(2, false), one = solve_with(1, true),
                       four = solve_with(4, true);
  REQUIRE(whole.status == ExchangeStatus::converged);
  REQUIRE(one.status == ExchangeStatus::converged);
  CHECK(one.iterations == four.iterations);
  CHECK(one.linear_iterations == four.linear_iterations);
  const double flow = largest_flow(whole);
  bool same = true;
  for (std::size_t k = 0; k < p.nodes.size(); ++k) {
    CHECK(one.nodes[k].temperature_K == Approx(whole.nodes[k].temperature_K).epsilon(1e-9));
    CHECK(one.nodes[k].heat_input_W == Approx(whole.nodes[k].heat_input_W).margin(1e-9 * flow));
    same = same && one.nodes[k].temperature_K == four.nodes[k].temperature_K;
  }
  for (std::size_t i = 0; i < p.faces.size(); ++i) {
    same = same && one.faces[i].radiosity == four.faces[i].radiosity &&
           one.faces[i].net_flux == four.faces[i].net_flux;
  }
  CHECK(same);
}

namespace {

// View factor between two coaxial parallel disks of radius R a distance h apart (Howell's
// catalogue, C-41, recalled: X = 2 + h^2 / R^2, F = (X - sqrt(X^2 - 4)) / 2); 1 at h = 0.
double disk_to_disk(double h, double R) {
  const double X = 2 + h * h / (R * R);
  return (X - std::sqrt(X * X - 4)) / 2;
}

// A closed circular tube of radius 1 and length `length`: `rings` equal rings of its wall
// (faces 1..rings) between two end disks (faces 0 and rings + 1). Exchange areas by disk
// algebra (Siegel & Howell's "view-factor algebra", recalled): with s(p, q) = pi D(|p - q|)
// the exchange area of the disks in planes p and q, what a ring between planes a < b sends
// across a plane p >= b is s(b, p) - s(a, p), so ring [a, b] to ring [c, d] (b <= c) is
// s(b, c) - s(a, c) - s(b, d) + s(a, d), and a ring sees itself in what it does not send
// through its two end planes. Symmetric by construction; rows of F sum to 1 up to round-off.
ViewFactors closed_tube(int rings, double length) {
  const int n = rings + 2;
  const double dz = length / rings, disk = kPi;
  auto s = [&](double p, double q) { return disk * disk_to_disk(std::abs(p - q), 1.0); };
  auto plane = [&](int ring, int side) { return (ring - 1 + side) * dz; };  // ring 1..rings
  Eigen::MatrixXd S = Eigen::MatrixXd::Zero(n, n);
  S(0, n - 1) = S(n - 1, 0) = s(0, length);
  for (int i = 1; i <= rings; ++i) {
    const double a = plane(i, 0), b = plane(i, 1);
    S(0, i) = S(i, 0) = s(0, a) - s(0, b);
    S(n - 1, i) = S(i, n - 1) = s(length, b) - s(length, a);
    S(i, i) = 2 * kPi * dz - 2 * (disk - s(a, b));
    for (int j = i + 1; j <= rings; ++j) {
      const double c = plane(j, 0), d = plane(j, 1);
      S(i, j) = S(j, i) = s(b, c) - s(a, c) - s(b, d) + s(a, d);
    }
  }
  ViewFactors vf;
  std::vector<Eigen::Triplet<double>> entries;
  for (int i = 0; i < n; ++i) {
    vf.areas.push_back(i == 0 || i == n - 1 ? disk : 2 * kPi * dz);
    for (int j = 0; j < n; ++j) {
      if (S(i, j) > 0) entries.emplace_back(i, j, S(i, j) / vf.areas[i]);
    }
  }
  vf.F.resize(n, n);
  vf.F.setFromTriplets(entries.begin(), entries.end());
  vf.names.resize(n);
  vf.rays.assign(n, 0);
  vf.to_surroundings.assign(n, 0.0);
  vf.to_back_faces.assign(n, 0.0);
  vf.smoothed = true;
  return vf;
}

}  // namespace

TEST_CASE(
    "the two-level preconditioner gives the same answer in fewer GMRES iterations in a long "
    "reradiating tube",
    "[exchange]") {
  // A 30:1 tube (length 60, radius 1) of 600 rings at emissivity 0.3 with wall losses, its
  // ends at 1400 K and 600 K: the walls nearly reradiate, and the slow modes of S are smooth
  // along the tube.
  const int rings = 600;
  const ViewFactors vf = closed_tube(rings, 60.0);
  double worst_row = 0;
  for (int i = 0; i < rings + 2; ++i) {
    worst_row = std::max(worst_row, std::abs(vf.F.row(i).sum() - 1));
  }
  REQUIRE(worst_row < 1e-9);  // the disk algebra closes every row
  ExchangeProblem p;
  p.view_factors = &vf;
  for (int i = 0; i < rings + 2; ++i) {
    NodeCondition c{ConditionKind::adiabatic, 0.0, {}, WallLoss{0.2, 300.0}};
    if (i == 0) c = {ConditionKind::temperature, 1400.0, {}, {}};
    if (i == rings + 1) c = {ConditionKind::temperature, 600.0, {}, {}};
    p.nodes.push_back({"n" + std::to_string(i), c});
    p.faces.push_back({std::uint32_t(i), i == 0 || i == rings + 1 ? 0.8 : 0.3});
  }
  ExchangeOptions plain = forced(true, rings + 2), two_level = plain;
  plain.coarse_aggregates = 0;
  two_level.coarse_aggregates = 64;
  const ExchangeResult without = solve_exchange(p, plain), with = solve_exchange(p, two_level);
  // Aggregates cut by the faces' centres (the rings in reverse order along the axis: the
  // cuts must follow the coordinates, not the face order).
  for (int i = 0; i < rings + 2; ++i) {
    const double z = i == 0 ? 0.0 : i == rings + 1 ? 60.0 : (i - 0.5) * 60.0 / rings;
    p.face_centres.push_back(Vec3{0, 0, 60.0 - z});
  }
  const ExchangeResult by_centres = solve_exchange(p, two_level);
  INFO(without.BriefReport());
  INFO(with.BriefReport());
  INFO(by_centres.BriefReport());
  REQUIRE(without.status == ExchangeStatus::converged);
  REQUIRE(with.status == ExchangeStatus::converged);
  REQUIRE(by_centres.status == ExchangeStatus::converged);
  CHECK(with.linear_iterations * 2 <= without.linear_iterations);
  CHECK(by_centres.linear_iterations * 2 <= without.linear_iterations);
  for (int k = 0; k < rings + 2; ++k) {
    CHECK(with.nodes[k].temperature_K == Approx(without.nodes[k].temperature_K).epsilon(1e-9));
    CHECK(by_centres.nodes[k].temperature_K ==
          Approx(without.nodes[k].temperature_K).epsilon(1e-9));
  }
  // The first law: the heat put into the ends leaves through the wall losses.
  double input = 0, lost = 0;
  for (const NodeResult& n : with.nodes) input += n.heat_input_W, lost += n.wall_loss_W;
  CHECK(lost > 0.01 * with.nodes[0].heat_input_W);
  CHECK(std::abs(input - lost) <= 1e-9 * with.nodes[0].heat_input_W);
}

TEST_CASE("face centres that do not fit the faces are refused", "[exchange]") {
  const ViewFactors vf = random_enclosure(300, 30, 0.0, 131);
  ExchangeProblem p = make_problem(vf, Mix::inputs, 1, 0, 132);
  p.face_centres.assign(299, Vec3{0, 0, 0});
  CHECK_THROWS_WITH(solve_exchange(p, forced(true, 300)),
                    Catch::Contains("299 face centres for 300 faces"));
  p.face_centres.assign(300, Vec3{0, 0, 0});
  p.face_centres[17].y = std::numeric_limits<double>::quiet_NaN();
  CHECK_THROWS_WITH(solve_exchange(p, forced(true, 300)), Catch::Contains("not finite"));
  p.face_centres[17].y = 1;
  CHECK(solve_exchange(p, forced(true, 300)).status == ExchangeStatus::converged);
}
