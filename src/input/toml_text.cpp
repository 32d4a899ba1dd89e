// Text of TOML nodes for the scene file's messages (see input/toml_text.hpp).
#include "input/toml_text.hpp"

#include <algorithm>
#include <sstream>
#include <vector>

#include "core/text.hpp"

namespace hearthray::input {

std::size_t edit_distance(const std::string& a, const std::string& b) {
  std::vector<std::size_t> row(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) row[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    std::size_t diagonal = row[0];
    row[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const std::size_t up = row[j];
      row[j] = std::min({row[j] + 1, row[j - 1] + 1, diagonal + (a[i - 1] != b[j - 1])});
      diagonal = up;
    }
  }
  return row[b.size()];
}

std::string type_name(const toml::node& node) {
  switch (node.type()) {
    case toml::node_type::string:
      return "a string";
    case toml::node_type::integer:
      return "an integer";
    case toml::node_type::floating_point:
      return "a number with a fraction";
    case toml::node_type::boolean:
      return "true/false";
    case toml::node_type::table:
      return "a table";
    case toml::node_type::array:
      return "an array";
    default:
      return "a date or time";
  }
}

std::string number_text(const toml::node& node) {
  std::ostringstream out;
  if (auto i = node.as_integer()) out << i->get();
  if (auto f = node.as_floating_point()) return rounded("%.6g", f->get());
  return out.str();
}

}  // namespace hearthray::input
