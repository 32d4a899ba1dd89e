// shift_right, the parallel form of an overlapping std::memmove to the right: the same bytes
// as memmove (the reference, a standard library function) for every length, shift and thread
// count, on either side of the length where it starts cutting the range into pieces.
#include <tbb/global_control.h>

#include <catch2/catch.hpp>
#include <cstdint>
#include <numeric>
#include <vector>

#include "core/shift_right.hpp"

using namespace hearthray;

TEST_CASE("shift_right moves as std::memmove does in pieces or not") {
  const std::size_t piece = std::size_t(1) << 21;
  for (int threads : {1, 2}) {
    tbb::global_control limit(tbb::global_control::max_allowed_parallelism, std::size_t(threads));
    for (std::size_t length :
         {std::size_t(0), std::size_t(7), 2 * piece - 1, 2 * piece, 5 * piece + 12345}) {
      for (std::size_t by : {std::size_t(0), std::size_t(1), std::size_t(3), std::size_t(4099)}) {
        const std::size_t from = 5, size = from + length + by + 9;
        std::vector<std::uint32_t> expected(size), got(size);
        std::iota(expected.begin(), expected.end(), 1000u);
        got = expected;
        std::memmove(expected.data() + from + by, expected.data() + from, length * 4);
        shift_right(got.data(), from, from + length, by);
        INFO("threads " << threads << ", length " << length << ", by " << by);
        REQUIRE(got == expected);
      }
    }
  }
}
