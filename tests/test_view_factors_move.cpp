// Moving view factors must hand the matrix over, not copy it: at 100k patches it holds
// gigabytes, and Eigen 3.4's SparseMatrix has no move operations of its own.
#include <catch2/catch.hpp>

#include "hearthray/view_factors.hpp"

using namespace hearthray;

TEST_CASE("moving view factors hands the matrix over without copying it", "[view_factors]") {
  ViewFactors a;
  a.names = {"a", "b"};
  a.areas = {1, 2};
  a.rays = {10, 20};
  a.F.resize(2, 2);
  a.F.insert(0, 1) = 0.25;
  a.F.makeCompressed();
  a.to_surroundings = {0.75, 0.875};
  a.smoothed = true;
  a.max_correction_sigma = 1.5;
  const double* storage = a.F.valuePtr();

  ViewFactors b(std::move(a));
  CHECK(b.F.valuePtr() == storage);  // the same storage: nothing was copied
  CHECK(b.F.coeff(0, 1) == 0.25);
  CHECK(b.size() == 2);
  CHECK(b.smoothed);
  CHECK(b.max_correction_sigma == 1.5);

  ViewFactors c;
  c = std::move(b);
  CHECK(c.F.valuePtr() == storage);
  CHECK(c.to_surroundings == std::vector<double>{0.75, 0.875});
  CHECK(c.rays == std::vector<std::uint64_t>{10, 20});

  const ViewFactors d = c;  // copies still copy
  CHECK(d.F.valuePtr() != storage);
  CHECK(d.F.coeff(0, 1) == 0.25);
}
