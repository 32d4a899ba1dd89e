// Statistics of the Monte Carlo estimates: one place for the standard error of a factor.
#pragma once

#include <cstdint>

namespace hearthray {

// Standard error of a factor (a binomial proportion: each ray lands on the receiver or not)
// estimated as f from n rays: sqrt(f (1 - f) / n), with f clamped to [0, 1].
// n = 0: infinity. No ray was sent, so the estimate carries no information at all.
double factor_standard_error(double f, std::uint64_t n);

}  // namespace hearthray
