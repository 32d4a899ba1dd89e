#pragma once

#include <string>
#include <vector>

#include "common.hpp"

namespace hearthray::cli {

struct FactorsArgs {
  std::string input;                 // scene.toml or mesh.obj
  std::vector<std::string> outputs;  // -o, format by extension
  RaySettings rays;
};
int run_factors_command(const FactorsArgs& args);

struct CheckArgs {
  std::string input;
  std::uint64_t rays = 20000;  // quick estimate
  std::uint64_t seed = 1;
  int threads = 0;
};
int run_check_command(const CheckArgs& args);

}  // namespace hearthray::cli
