#include "hearthray/statistics.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace hearthray {

double factor_standard_error(double f, std::uint64_t n) {
  if (n == 0) return std::numeric_limits<double>::infinity();
  const double p = std::clamp(f, 0.0, 1.0);
  return std::sqrt(p * (1 - p) / static_cast<double>(n));
}

}  // namespace hearthray
