// Unit tests of the gray-body exchange solver on view factors written down exactly (no ray
// tracing). Published closed forms are in validation/test_exchange_validation.cpp; here: the
// conventions (heat flux area, back faces, surroundings), consistency between the solver's
// paths, Newton's behaviour, and every refusal of bad input.
#include <Eigen/SparseCore>
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <random>
#include <vector>

#include "hearthray/error.hpp"
#include "hearthray/exchange.hpp"
#include "hearthray/units.hpp"
#include "support/exchange_fixtures.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

constexpr double kSigma = kStefanBoltzmann;

// A closed four-surface enclosure with exact reciprocity: exchange areas S = A F symmetric,
// each row summing to its area (surface 3 is concave and sees itself). Common practice for a
// synthetic case; no source.
ViewFactors four_surface_enclosure() {
  const std::vector<double> A = {1.0, 2.0, 1.5, 4.0};
  const std::vector<std::vector<double>> S = {
      {0.0, 0.2, 0.3, 0.5}, {0.2, 0.0, 0.5, 1.3}, {0.3, 0.5, 0.0, 0.7}, {0.5, 1.3, 0.7, 1.5}};
  std::vector<std::vector<double>> F(4, std::vector<double>(4));
  for (int i = 0; i < 4; ++i) {
    for (int j = 0; j < 4; ++j) F[i][j] = S[i][j] / A[i];
  }
  return exact_factors(F, A);
}

}  // namespace

TEST_CASE("black parallel plates exchange sigma (T1^4 - T2^4) per unit area", "[exchange]") {
  // Two black surfaces that see only each other (Incropera et al., Fundamentals of Heat and
  // Mass Transfer, sec. 13.2, blackbody exchange q_ij = A_i F_ij sigma (T_i^4 - T_j^4);
  // recalled from memory, section number not checked).
  const ViewFactors vf = exact_factors({{0, 1}, {1, 0}}, {2.0, 2.0});
  const auto p = one_node_per_face(vf, {1.0, 1.0}, {fixed(1000), fixed(500)});
  const ExchangeResult r = solve_exchange(p, ExchangeOptions{});
  REQUIRE(r.status == ExchangeStatus::converged);
  CHECK(r.iterations == 0);
  const double q = 2.0 * kSigma * (std::pow(1000.0, 4) - std::pow(500.0, 4));
  CHECK(r.nodes[0].net_radiation_W == Approx(q).epsilon(1e-12));
  CHECK(r.nodes[1].net_radiation_W == Approx(-q).epsilon(1e-12));
  // A black surface's radiosity is its emissive power.
  CHECK(r.faces[0].radiosity == Approx(kSigma * std::pow(1000.0, 4)).epsilon(1e-12));
  CHECK(r.faces[0].irradiation == Approx(kSigma * std::pow(500.0, 4)).epsilon(1e-12));
}

TEST_CASE("prescribed powers give back the temperatures they came from", "[exchange]") {
  const ViewFactors vf = four_surface_enclosure();
  const std::vector<double> eps = {0.9, 0.3, 1.0, 0.6};
  const auto known = one_node_per_face(vf, eps, {fixed(1300), fixed(700), fixed(900), fixed(400)});
  const ExchangeResult a = solve_exchange(known, ExchangeOptions{});
  REQUIRE(a.status == ExchangeStatus::converged);
  double largest = 0;
  for (const auto& n : a.nodes) largest = std::max(largest, std::abs(n.heat_input_W));
  CHECK(std::abs(a.balance_W) <= 1e-12 * largest);

  auto inverse = known;
  inverse.nodes[0].condition = power(a.nodes[0].heat_input_W);
  inverse.nodes[2].condition = {ConditionKind::heat_flux, a.nodes[2].heat_input_W / 1.5, {}, {}};
  const ExchangeResult b = solve_exchange(inverse, ExchangeOptions{});
  REQUIRE(b.status == ExchangeStatus::converged);
  CHECK(b.nodes[0].temperature_K == Approx(1300).epsilon(1e-9));
  CHECK(b.nodes[2].temperature_K == Approx(900).epsilon(1e-9));
  CHECK(b.final_residual_W <= 1e-9 * largest);
  for (int i = 0; i < 4; ++i) {
    CHECK(b.faces[i].net_power == Approx(a.faces[i].net_power).margin(1e-9 * largest));
  }
}

TEST_CASE("a heat flux acts on all faces of a two-sided sheet", "[exchange]") {
  // A thin sheet (two faces, one node) that sees only black surroundings on both sides: each
  // face gives eps sigma (T^4 - Ts^4) per unit area (small surface in large surroundings;
  // Incropera et al., eq. 1.7, recalled from memory). With the flux over both faces' area:
  // q'' = eps sigma (T^4 - Ts^4).
  const ViewFactors vf = exact_factors({{0, 0}, {0, 0}}, {0.5, 0.5}, {1.0, 1.0});
  ExchangeProblem p;
  p.view_factors = &vf;
  p.surroundings_K = 300.0;
  p.nodes = {{"sheet", {ConditionKind::heat_flux, 800.0, {}, {}}}};
  p.faces = {{0, 0.7}, {0, 0.7}};
  const ExchangeResult r = solve_exchange(p, ExchangeOptions{});
  REQUIRE(r.status == ExchangeStatus::converged);
  const double T = std::pow(std::pow(300.0, 4) + 800.0 / (0.7 * kSigma), 0.25);
  CHECK(r.nodes[0].temperature_K == Approx(T).epsilon(1e-10));
  CHECK(r.nodes[0].area == Approx(1.0));
  CHECK(r.nodes[0].heat_input_W == Approx(800.0).epsilon(1e-10));
  CHECK(r.surroundings_W == Approx(800.0).epsilon(1e-10));

  p.nodes[0].condition = power(800.0);  // the same heat as a power
  CHECK(solve_exchange(p, ExchangeOptions{}).nodes[0].temperature_K == Approx(T).epsilon(1e-10));
}

TEST_CASE("radiation landing on back faces is treated as radiation to the surroundings",
          "[exchange]") {
  ViewFactors split = exact_factors({{0, 0.5}, {0.25, 0.5}}, {1.0, 2.0}, {0.2, 0.25});
  split.to_back_faces = {0.3, 0.0};
  const ViewFactors merged = exact_factors({{0, 0.5}, {0.25, 0.5}}, {1.0, 2.0}, {0.5, 0.25});
  auto p = one_node_per_face(split, {0.8, 0.5}, {power(2000), fixed(600)});
  p.surroundings_K = 350.0;
  auto q = p;
  q.view_factors = &merged;
  const ExchangeResult a = solve_exchange(p, ExchangeOptions{});
  const ExchangeResult b = solve_exchange(q, ExchangeOptions{});
  REQUIRE(a.status == ExchangeStatus::converged);
  CHECK(a.nodes[0].temperature_K == Approx(b.nodes[0].temperature_K).epsilon(1e-12));
  CHECK(a.surroundings_W == Approx(b.surroundings_W).epsilon(1e-12));
  // Open scene: what the faces send out net, the surroundings receive (reciprocity is exact).
  CHECK(std::abs(a.balance_W) <= 1e-12 * 2000);
}

TEST_CASE("Newton's method converges in a few steps with convection and wall loss", "[exchange]") {
  const ViewFactors vf = four_surface_enclosure();
  auto p = one_node_per_face(vf, {0.85, 0.5, 0.7, 0.9},
                             {power(5000), adiabatic(), power(-300), fixed(500)});
  p.nodes[1].condition.convection = Convection{15.0, 320.0};
  p.nodes[2].condition.wall_loss = WallLoss{2.0, 280.0};
  p.nodes[3].condition.convection = Convection{8.0, 300.0};  // output only: T is fixed
  ExchangeOptions options;
  const ExchangeResult r = solve_exchange(p, options);
  INFO(r.BriefReport());
  REQUIRE(r.status == ExchangeStatus::converged);
  CHECK(r.iterations >= 1);
  CHECK(r.iterations <= 8);
  const double largest = r.nodes[0].area * kSigma * std::pow(r.nodes[0].temperature_K, 4);
  CHECK(r.final_residual_W <= 1e-9 * largest);
  CHECK(r.nodes[0].heat_input_W == Approx(5000).epsilon(1e-9));
  CHECK(std::abs(r.nodes[1].heat_input_W) <= 1e-9 * largest);
  CHECK(r.nodes[1].convection_W == Approx(-r.nodes[1].net_radiation_W).epsilon(1e-9));
  CHECK(r.nodes[2].wall_loss_W == Approx(2.0 * 1.5 * (r.nodes[2].temperature_K - 280)));
  CHECK(r.nodes[3].convection_W == Approx(8.0 * 4.0 * 200.0));
  // Closed enclosure: the heat inputs of all nodes sum to the convection and wall losses.
  double net = 0;
  for (const auto& n : r.nodes) net += n.net_radiation_W;
  CHECK(std::abs(net) <= 1e-9 * largest);
  CHECK(std::abs(r.balance_W) <= 1e-9 * largest);

  options.max_iterations = 1;
  const ExchangeResult cut = solve_exchange(p, options);
  CHECK(cut.status == ExchangeStatus::not_converged);
  CHECK(cut.iterations == 1);
  CHECK_THAT(cut.message, Catch::Contains("did not converge in 1 iterations"));
  CHECK(cut.final_residual_W > 1e-9 * largest);
  CHECK_THAT(cut.BriefReport(), Catch::Contains("NOT CONVERGED"));
}

TEST_CASE("an impossible heat input is reported, not solved", "[exchange]") {
  // Pure radiation: drawing 1 MW from a surface that can receive a few kW has no solution.
  const ViewFactors vf = four_surface_enclosure();
  auto p = one_node_per_face(vf, {0.9, 0.9, 0.9, 0.9},
                             {power(-1e6), fixed(500), fixed(600), fixed(700)});
  const ExchangeResult r = solve_exchange(p, ExchangeOptions{});
  CHECK(r.status == ExchangeStatus::not_converged);
  CHECK_THAT(r.message, Catch::Contains("no solution with positive temperatures"));
  CHECK_THAT(r.message, Catch::Contains("'s0'"));
}

TEST_CASE("a singular radiosity system is a status, not a crash", "[exchange]") {
  // Not physical: F_11 = 2 with eps = 0.5 makes I - (1 - eps) F zero.
  const ViewFactors vf = exact_factors({{2.0}}, {1.0});
  const auto p = one_node_per_face(vf, {0.5}, {fixed(400)});
  const ExchangeResult r = solve_exchange(p, ExchangeOptions{});
  CHECK(r.status == ExchangeStatus::singular);
  CHECK_THAT(r.message, Catch::Contains("singular"));
  CHECK_THAT(r.BriefReport(), Catch::Contains("SINGULAR"));
}

TEST_CASE("the sparse iterative path agrees with the dense path on 2000 faces", "[exchange]") {
  // Synthetic open enclosure: a random sparse symmetric exchange-area matrix (reciprocity
  // exact), rows scaled to sum to at most 0.95, the rest escaping to the surroundings.
  const int n = 2000, nodes = 40;
  std::mt19937_64 rng(20240611);
  std::uniform_real_distribution<double> unit(0.0, 1.0);
  std::vector<double> A(n);
  for (double& a : A) a = 0.5 + 1.5 * unit(rng);
  std::vector<Eigen::Triplet<double>> s;
  for (int i = 0; i < n; ++i) {
    for (int k = 0; k < 12; ++k) {
      const int j = int(unit(rng) * n) % n;
      const double w = unit(rng);
      s.emplace_back(i, j, w);
      s.emplace_back(j, i, w);
    }
  }
  SparseMatrix S(n, n);
  S.setFromTriplets(s.begin(), s.end());
  Eigen::VectorXd row = S * Eigen::VectorXd::Ones(n);
  double worst = 0;
  for (int i = 0; i < n; ++i) worst = std::max(worst, row[i] / A[i]);
  ViewFactors vf;
  vf.areas = A;
  Eigen::VectorXd row_scale(n);
  for (int i = 0; i < n; ++i) row_scale[i] = 0.95 / worst / A[i];
  vf.F = row_scale.asDiagonal() * S;
  row = vf.F * Eigen::VectorXd::Ones(n);
  for (int i = 0; i < n; ++i) {
    vf.names.push_back("p" + std::to_string(i));
    vf.to_surroundings.push_back(1.0 - row[i]);
  }
  ExchangeProblem p;
  p.view_factors = &vf;
  p.surroundings_K = 300.0;
  for (int k = 0; k < nodes; ++k) {
    NodeCondition c = k < 10   ? fixed(400.0 + 60 * k)
                      : k < 20 ? power(3000.0 + 100 * k)
                      : k < 30 ? adiabatic()
                               : NodeCondition{ConditionKind::heat_flux, 50.0, {}, {}};
    if (k >= 25) c.convection = Convection{10.0, 290.0};
    p.nodes.push_back({"n" + std::to_string(k), c});
  }
  for (int i = 0; i < n; ++i)
    p.faces.push_back({std::uint32_t(i % nodes), 0.3 + 0.7 * (i % 7) / 6.0});

  ExchangeOptions sparse_options, dense_options;
  dense_options.dense_face_limit = n;
  const ExchangeResult a = solve_exchange(p, sparse_options);
  const ExchangeResult b = solve_exchange(p, dense_options);
  INFO(a.BriefReport());
  REQUIRE(a.status == ExchangeStatus::converged);
  REQUIRE(b.status == ExchangeStatus::converged);
  double largest = 0;
  for (const auto& node : b.nodes) largest = std::max(largest, std::abs(node.net_radiation_W));
  for (int k = 0; k < nodes; ++k) {
    CHECK(a.nodes[k].temperature_K == Approx(b.nodes[k].temperature_K).epsilon(1e-9));
    CHECK(a.nodes[k].net_radiation_W == Approx(b.nodes[k].net_radiation_W).margin(1e-9 * largest));
  }
  CHECK(std::abs(a.balance_W) <= 1e-9 * largest);
  CHECK(a.surroundings_W == Approx(b.surroundings_W).epsilon(1e-9));
}

TEST_CASE("options are checked", "[exchange]") {
  std::string why;
  ExchangeOptions o;
  CHECK(o.IsValid(&why));
  o.tolerance = 0;
  CHECK_FALSE(o.IsValid(&why));
  CHECK_THAT(why, Catch::Contains("tolerance"));
  o = ExchangeOptions{};
  o.max_iterations = 0;
  CHECK_FALSE(o.IsValid(&why));
  CHECK_THAT(why, Catch::Contains("max_iterations"));
  o.max_iterations = 5;
  o.dense_face_limit = -1;
  CHECK_FALSE(o.IsValid(&why));
  CHECK_THAT(why, Catch::Contains("dense_face_limit"));
  o.dense_face_limit = 0;
  CHECK(o.IsValid(&why));
  o.max_iterations = 0;
  const ViewFactors vf = exact_factors({{0, 1}, {1, 0}}, {1.0, 1.0});
  const auto p = one_node_per_face(vf, {1.0, 1.0}, {fixed(400), fixed(300)});
  CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("max_iterations"));
}

TEST_CASE("bad exchange problems are refused with a message naming what to fix", "[exchange]") {
  const ViewFactors vf = exact_factors({{0, 1}, {1, 0}}, {1.0, 1.0});
  const auto good = one_node_per_face(vf, {0.8, 0.8}, {fixed(400), power(10)});
  REQUIRE(solve_exchange(good, ExchangeOptions{}).status == ExchangeStatus::converged);
  const ExchangeOptions o;
  auto p = good;

  SECTION("emissivity 0") {
    p.faces[1].emissivity = 0;
    CHECK_THROWS_WITH(solve_exchange(p, o),
                      Catch::Contains("'p1'") && Catch::Contains("above 0 and at most 1"));
  }
  SECTION("emissivity above 1") {
    p.faces[0].emissivity = 1.2;
    CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("emissivity 1.2"));
  }
  SECTION("negative kelvin") {
    p.nodes[0].condition = fixed(-20);
    CHECK_THROWS_WITH(solve_exchange(p, o),
                      Catch::Contains("'s0'") && Catch::Contains("above 0 K"));
  }
  SECTION("zero kelvin fluid") {
    p.nodes[1].condition.convection = Convection{5, 0};
    CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("fluid temperature of surface 's1'"));
  }
  SECTION("negative kelvin outside") {
    p.nodes[1].condition.wall_loss = WallLoss{1, -3};
    CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("outside temperature"));
  }
  SECTION("negative kelvin surroundings") {
    p.surroundings_K = -1.0;
    CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("surroundings temperature"));
  }
  SECTION("negative convection coefficient") {
    p.nodes[1].condition.convection = Convection{-5, 300};
    CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("h = -5"));
  }
  SECTION("fewer faces than view-factor patches") {
    p.faces.pop_back();
    CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("one face per view-factor patch"));
  }
  SECTION("areas of the wrong size") {
    ViewFactors bad = vf;
    bad.areas.push_back(1.0);
    p.view_factors = &bad;
    CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("3 areas"));
  }
  SECTION("node index out of range") {
    p.faces[1].node = 7;
    CHECK_THROWS_WITH(solve_exchange(p, o),
                      Catch::Contains("node 7") && Catch::Contains("only 2 nodes"));
  }
  SECTION("a node with no face") {
    p.nodes.push_back({"lonely", fixed(300)});
    CHECK_THROWS_WITH(solve_exchange(p, o),
                      Catch::Contains("'lonely'") && Catch::Contains("no face"));
  }
  SECTION("no view factors") {
    p.view_factors = nullptr;
    CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("no view factors"));
  }
  SECTION("escaping radiation without a surroundings temperature") {
    const ViewFactors open = exact_factors({{0, 0.75}, {0.75, 0}}, {1.0, 1.0}, {0.25, 0.25});
    p.view_factors = &open;
    CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("25 % escapes") &&
                                                Catch::Contains("[surroundings] temperature"));
  }
  SECTION("back-face hits without a surroundings temperature") {
    ViewFactors back = exact_factors({{0, 0.9}, {0.9, 0}}, {1.0, 1.0});
    back.to_back_faces = {0.1, 0.1};
    p.view_factors = &back;
    CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("10 % lands on back faces") &&
                                                Catch::Contains("[surroundings] temperature"));
  }
  SECTION("a negative view factor") {
    const ViewFactors neg = exact_factors({{0, -1}, {1, 0}}, {1.0, 1.0});
    p.view_factors = &neg;
    CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("not negative"));
  }
  SECTION("a view factor that is not a number, infinite or the least negative number") {
    for (double bad :
         {std::numeric_limits<double>::quiet_NaN(), -std::numeric_limits<double>::quiet_NaN(),
          std::numeric_limits<double>::infinity(), -std::numeric_limits<double>::denorm_min()}) {
      const ViewFactors odd = exact_factors({{0, 1}, {bad, 0}}, {1.0, 1.0});
      p.view_factors = &odd;
      CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("must be finite"));
    }
  }
  SECTION("no temperature level anywhere") {
    p.nodes[0].condition = adiabatic();
    CHECK_THROWS_WITH(solve_exchange(p, o),
                      Catch::Contains("nothing fixes the temperature level") &&
                          Catch::Contains("give at least one surface a temperature"));
  }
  SECTION("a convection coefficient of 0 does not fix the level") {
    p.nodes[0].condition = power(5);
    p.nodes[1].condition.convection = Convection{0, 300};
    CHECK_THROWS_WITH(solve_exchange(p, o), Catch::Contains("nothing fixes"));
  }
  SECTION("a group seen only from the row of an anchored face is joined to it") {
    // Rows 1 and 2 see only each other and row 0 (fixed) sees face 1: not reciprocal, but the
    // level check joins the faces of every row, so faces 1 and 2 share face 0's anchor (what
    // the solve then makes of such factors is not the point here).
    const ViewFactors seen = exact_factors({{0, 1, 0}, {0, 0, 1}, {0, 1, 0}}, {1.0, 1.0, 1.0});
    p = one_node_per_face(seen, {0.5, 0.5, 0.5}, {fixed(300), adiabatic(), adiabatic()});
    CHECK_NOTHROW(solve_exchange(p, o));
  }
  SECTION("a floating group beside an anchored one") {
    const ViewFactors two = exact_factors({{0, 1, 0, 0}, {1, 0, 0, 0}, {0, 0, 0, 1}, {0, 0, 1, 0}},
                                          {1.0, 1.0, 1.0, 1.0});
    p = one_node_per_face(two, {0.5, 0.5, 0.5, 0.5}, {fixed(300), power(1), power(2), adiabatic()});
    CHECK_THROWS_WITH(solve_exchange(p, o),
                      Catch::Contains("surfaces 's2', 's3' exchange radiation only among"));
  }
}
