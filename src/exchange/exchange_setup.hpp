// Private to the exchange solver: the problem checked and laid out per face and per node.
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <string>
#include <vector>

#include "core/text.hpp"
#include "hearthray/exchange.hpp"

namespace hearthray {
namespace exchange_detail {

struct Setup {
  std::size_t faces = 0;
  std::size_t nodes = 0;
  const SparseMatrix* F = nullptr;
  bool reciprocal = false;  // smoothed factors: A_i F_ij = A_j F_ji, checked before use
  // Per face.
  Eigen::VectorXd eps;
  Eigen::VectorXd area;
  Eigen::VectorXd to_surroundings;  // escaped plus back-face fractions
  std::vector<std::uint32_t> node_of_face;
  const std::vector<Vec3>* centres = nullptr;  // ExchangeProblem::face_centres; null if none
  // Per node.
  std::vector<std::string> node_names;
  Eigen::VectorXd node_area;      // sum of the node's faces' areas
  Eigen::VectorXd hA, fluid_K;    // convection conductance W/K and fluid temperature
  Eigen::VectorXd UA, outside_K;  // wall conductance W/K and outside temperature
  Eigen::VectorXd input_W;        // prescribed heat input (nodes without a temperature)
  std::vector<bool> fixed;        // temperature given
  Eigen::VectorXd fixed_K;
  double surroundings_Eb = 0;  // sigma T_s^4, 0 when no face sees the surroundings
};

// Checks the problem (throws InputError with a message naming the face or node) and lays it
// out. Also refuses a problem where a group of nodes has nothing fixing its temperature level.
Setup check_and_set_up(const ExchangeProblem& problem);

// A temperature level to start Newton's method from: the mean of the given temperatures
// (fixed nodes, fluids, outside, surroundings seen by some face).
double reference_temperature(const Setup& s);

// Face and node results from radiosities J (per face) and temperatures (per node), with the
// net flux q = eps (E - G), G = F J + F_s E_s; also the largest radiosity residual.
// FJ, when given, is F J as multiply() gives it (saves that product).
void fill_results(const Setup& s, const Eigen::VectorXd& J, const Eigen::VectorXd& node_K,
                  ExchangeResult* result, const Eigen::VectorXd* FJ = nullptr);

// The large path (src/exchange/exchange_large.cpp): Newton-Krylov on radiosities and node
// temperatures together. Fills status, message, iterations and the linear-solve fields of `result`,
// and leaves the last iterate in J and node_K (also when it did not converge), and F J in FJ
// (empty if not known).
void solve_large(const Setup& s, const ExchangeOptions& options, ExchangeResult* result,
                 Eigen::VectorXd* J, Eigen::VectorXd* node_K, Eigen::VectorXd* FJ);

}  // namespace exchange_detail
}  // namespace hearthray
