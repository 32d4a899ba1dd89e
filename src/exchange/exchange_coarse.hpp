// Private to the exchange solver's large path: a two-level (coarse-space) right preconditioner
// for GMRES on S = I - W F (see exchange_large.cpp for S and W).
//
// With W close to 1 (nearly reradiating walls) the slow modes of S are smooth over the
// enclosure: rows of F sum to about 1, so F nearly keeps a vector that is constant, or varies
// slowly, over many faces. The faces are grouped into m aggregates; P injects a value per
// aggregate onto its faces, R takes the area-weighted mean over each aggregate (R P = I), and
//   M^-1 = I + P (S_c^-1 - I) R,   S_c = I - W_c F_c,
//   F_c = R F P   (F_c,IJ = sum_{i in I} A_i sum_{j in J} F_ij / A_I: one pass over F),
//   W_c = R W P   (from the current Newton step's a_k: O(faces) per step).
// S_c equals R S P when R W = W_c R, that is when W maps a vector of zero mean on every
// aggregate to one of zero mean on every aggregate. That holds for aggregates of one
// emissivity on fixed nodes or inside one node of many faces, and nearly for nodes of one face
// (W_ii = 1 - eps_i (1 - A_i eps_i / a_k), 1 without convection or wall loss): aggregates never
// mix nodes of given and unknown temperature, emissivities, or nodes of many faces, as far as
// the number of such classes allows. Within a class they are cut by recursive coordinate
// bisection of the faces' centres when the problem gives them (ExchangeProblem::face_centres),
// else they are runs of consecutive faces. S_c is factored densely (LU) once per Newton step.
// Everything is serial or split by aggregate (fixed by the data), so results do not depend on
// the thread count.
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <vector>

#include "exchange/exchange_setup.hpp"

namespace hearthray {
namespace exchange_detail {

// Products y_k = F x_k (at most three) that the pass over F building the coarse matrix also
// makes, each row summed in column order: bitwise what multiply() gives.
struct PassProducts {
  std::vector<const Eigen::VectorXd*> in;
  std::vector<Eigen::VectorXd*> out;
};

class CoarseSpace {
 public:
  // About `target` aggregates (fewer for small problems, see the constructor; a few more where
  // classes of faces end mid-way). One pass over F, which also makes `products`.
  CoarseSpace(const Setup& s, int target, const PassProducts& products = {});
  std::size_t size() const { return area_.size(); }
  // The coarse operator for the node coefficients a_k of a Newton step (any value on fixed
  // nodes). Returns false if S_c is singular or not finite (then do not precondition). Keeps
  // the last factorisation when no unknown node's a_k moved by more than kRefactor of itself
  // since (a preconditioner need not be exact: only the linear solves' paths can change).
  bool factor(const Eigen::VectorXd& a);
  // out = M^-1 in.
  void apply(const Eigen::VectorXd& in, Eigen::VectorXd* out) const;

 private:
  void bisect(std::size_t begin, std::size_t end, std::size_t pieces);
  void build_coarse_factors(const PassProducts& products);
  template <int K>
  void coarse_pass(const double* const* in, double* const* out);
  bool factor_now(const Eigen::VectorXd& a);
  const Setup& s_;
  std::vector<std::uint32_t> aggregate_;  // per face
  std::vector<std::uint32_t> first_;      // faces of aggregate I: order_[first_[I]..first_[I+1])
  std::vector<std::uint32_t> order_;
  Eigen::VectorXd area_;       // A_I
  Eigen::VectorXd reflected_;  // d_I = sum_{i in I} A_i (1 - eps_i) / A_I
  // Per (aggregate, unknown node) pair: c_{I,k} = sum_{i in I on k} A_i eps_i, grouped by node.
  struct Pair {
    std::uint32_t node, aggregate;
    double weight;
  };
  std::vector<Pair> pairs_;
  Eigen::MatrixXd Fc_;  // R F P, m x m
  Eigen::PartialPivLU<Eigen::MatrixXd> lu_;
  Eigen::VectorXd factored_a_;  // the a_k of lu_ (empty: none yet)
  bool factored_ok_ = false;    // what factor() returned for them
  mutable Eigen::VectorXd coarse_;
};

}  // namespace exchange_detail
}  // namespace hearthray
