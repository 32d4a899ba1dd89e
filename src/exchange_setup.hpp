// Private to the exchange solver: the problem checked and laid out per face and per node.
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <string>
#include <vector>

#include "hearthray/exchange.hpp"

namespace hearthray {
namespace exchange_detail {

struct Setup {
  std::size_t faces = 0;
  std::size_t nodes = 0;
  const SparseMatrix* F = nullptr;
  // Per face.
  Eigen::VectorXd eps;
  Eigen::VectorXd area;
  Eigen::VectorXd to_surroundings;  // escaped plus back-face fractions
  std::vector<std::uint32_t> node_of_face;
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

std::string format_number(double value);

}  // namespace exchange_detail
}  // namespace hearthray
