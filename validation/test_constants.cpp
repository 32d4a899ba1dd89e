#include <catch2/catch.hpp>

#include "hearthray/units.hpp"

// Stefan-Boltzmann constant: CODATA 2018 recommended value (exact in the 2019 SI).
TEST_CASE("Stefan-Boltzmann constant is the CODATA 2018 value", "[validation][constants]") {
  CHECK(hearthray::kStefanBoltzmann == 5.670374419e-8);
}
