#include <catch2/catch.hpp>

#include "hearthray/error.hpp"
#include "hearthray/units.hpp"

using namespace hearthray;

TEST_CASE("length units convert to metres", "[units]") {
  // 1 in = 25.4 mm and 1 ft = 304.8 mm exactly (international yard and pound agreement, 1959).
  CHECK(metres_per(parse_length_unit("mm")) == 1e-3);
  CHECK(metres_per(parse_length_unit("cm")) == 1e-2);
  CHECK(metres_per(parse_length_unit("m")) == 1.0);
  CHECK(metres_per(parse_length_unit("in")) == 0.0254);
  CHECK(metres_per(parse_length_unit("ft")) == 0.3048);
  CHECK_THROWS_WITH(parse_length_unit("yd"), Catch::Contains("mm, cm, m, in, ft"));
}
