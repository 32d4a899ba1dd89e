// Statistics of the Monte Carlo estimates: one place for the standard error of a factor.
#pragma once

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>

namespace hearthray {

// Standard error of a factor (a binomial proportion: each ray lands on the receiver or not)
// estimated as f from n rays: sqrt(f (1 - f) / n), with f clamped to [0, 1].
// n = 0: infinity. No ray was sent, so the estimate carries no information at all. Inline: the
// matrix file and the smoothing's measures call it for each of hundreds of millions of entries.
inline double factor_standard_error(double f, std::uint64_t n) {
  if (n == 0) return std::numeric_limits<double>::infinity();
  const double p = std::clamp(f, 0.0, 1.0);
  return std::sqrt(p * (1 - p) / static_cast<double>(n));
}

}  // namespace hearthray
