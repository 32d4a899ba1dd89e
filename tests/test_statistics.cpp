// The standard error of a Monte Carlo factor. A ray lands on a receiver or not, so the count of
// hits is binomial and the estimate f = hits / n has variance f (1 - f) / n (the variance of a
// binomial proportion: common knowledge, e.g. any probability text; recalled, no table).
#include <catch2/catch.hpp>
#include <cmath>

#include "hearthray/statistics.hpp"

using namespace hearthray;

TEST_CASE("factor standard error is the binomial sqrt(f (1 - f) / n)", "[statistics]") {
  CHECK(factor_standard_error(0.2, 5000) == std::sqrt(0.2 * 0.8 / 5000));
  CHECK(factor_standard_error(0.5, 1) == 0.5);
  // A factor of 0 or 1 is certain under the binomial model.
  CHECK(factor_standard_error(0.0, 100) == 0);
  CHECK(factor_standard_error(1.0, 100) == 0);
}

TEST_CASE("factor standard error clamps f to [0, 1]", "[statistics]") {
  // Smoothing can move a factor a hair past 0 or 1; the error is that of the boundary.
  CHECK(factor_standard_error(-1e-12, 100) == 0);
  CHECK(factor_standard_error(1 + 1e-12, 100) == 0);
}

TEST_CASE("factor standard error with no rays is infinite", "[statistics]") {
  // No ray sent: nothing is known about the factor (documented answer for n = 0).
  CHECK(std::isinf(factor_standard_error(0.3, 0)));
  CHECK(std::isinf(factor_standard_error(0.0, 0)));
}
