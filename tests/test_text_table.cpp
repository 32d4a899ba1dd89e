// Terminal tables (core/text.hpp TextTable): columns stay aligned whatever the cell widths,
// UTF-8 text counts one column per character. Plain layout rules, no outside source needed.
#include <catch2/catch.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "core/text.hpp"

using hearthray::display_width;
using hearthray::TextTable;

namespace {

std::vector<std::string> lines(const std::string& text) {
  std::vector<std::string> out;
  std::istringstream in(text);
  for (std::string line; std::getline(in, line);) out.push_back(line);
  return out;
}

}  // namespace

TEST_CASE("text table: a long name or word does not shift the columns after it", "[text]") {
  using Align = TextTable::Align;
  TextTable table({{"point"}, {"kind"}, {"t_mr C", Align::right}, {"verdict"}});
  table.add({"desk", "seated", "23.0", "within limits"});
  table.add({"standing_middle", "standing", "123.4", "warm ceiling over 5 K"});
  table.add({"b°", "sphere", "-1.5"});  // a missing last cell is blank
  const auto rows = lines(table.text());
  REQUIRE(rows.size() == 4);
  // Each column starts at the same character on every line: after the widest cell + 2 blanks.
  const std::size_t kind_at = std::string("standing_middle").size() + 2;
  const std::size_t number_end = kind_at + std::string("standing").size() + 2 + 6;
  CHECK(rows[0].substr(kind_at, 4) == "kind");
  CHECK(rows[1].substr(kind_at, 6) == "seated");
  CHECK(rows[2].substr(kind_at, 8) == "standing");
  CHECK(rows[3].substr(kind_at + 1, 6) == "sphere");  // "°" is 2 bytes, 1 column
  CHECK(rows[0].substr(number_end - 6, 6) == "t_mr C");
  CHECK(rows[1].substr(number_end - 4, 4) == "23.0");  // numbers right-aligned
  CHECK(rows[2].substr(number_end - 5, 5) == "123.4");
  CHECK(rows[1].substr(number_end + 2) == "within limits");
  // "b°" is two characters but three bytes: the row is as wide in characters as the others.
  CHECK(display_width("b°") == 2);
  CHECK(display_width(rows[3]) == number_end);  // no blanks after the last cell
  for (const std::string& r : rows) CHECK(r.back() != ' ');
}
