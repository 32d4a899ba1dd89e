// Text of numbers and of lists, one policy each, for every stage of the library.
//
// Machine files (CSV, Matrix Market, VTU, and text the library writes into JSON or NPY
// headers by hand) print a double as the shortest text that reads back as the same double
// (std::to_chars): no digits of noise, nothing lost. Human tables and messages round to what a
// reader needs, through `rounded`, and say percentages through `percent`.
#pragma once

#include <cstddef>
#include <string>
#include <utility>
#include <vector>

namespace hearthray {

// Shortest round-trip text: "0.1", "1e-05", "123456". Not finite: "nan", "inf", "-inf".
std::string shortest(double v);

// One printf conversion of one double, for human text: rounded("%.3g", v), rounded("%.1f", v).
// `spec` may carry text around the conversion ("%.1f %%") but exactly one conversion.
std::string rounded(const char* spec, double v);

// A fraction as a percentage for messages: "12.3 %"; below 0.1 % two significant digits
// ("0.0042 %") so a small share does not read as zero.
std::string percent(double fraction);

// "a, b, c": the items with `separator` between them.
std::string join(const std::vector<std::string>& items, const std::string& separator = ", ");

// "a, b, c, d, e and 3 more": the first `most` items, then how many were left out.
std::string join_at_most(const std::vector<std::string>& items, std::size_t most);

// A list in a sentence: "a", "a and b", "a, b and c".
std::string join_and(const std::vector<std::string>& items);

// Columns of a terminal table: UTF-8 text counted in characters (one column each).
std::size_t display_width(const std::string& utf8);

// A table for the terminal: each column as wide as its widest cell (header included), two
// blanks between columns, text left-aligned and numbers right-aligned as each column says;
// the last column is not padded. Long names never shift the columns after them.
class TextTable {
 public:
  enum class Align { left, right };
  struct Column {
    std::string header;
    Align align = Align::left;
  };
  explicit TextTable(std::vector<Column> columns) : columns_(std::move(columns)) {}
  // A row: at most one cell per column (missing cells are blank).
  void add(std::vector<std::string> cells) { rows_.push_back(std::move(cells)); }
  std::string text() const;

 private:
  std::vector<Column> columns_;
  std::vector<std::vector<std::string>> rows_;
};

// Text made safe inside HTML and XML, as element text or a quoted attribute value (the client
// report, VTU array names): & < > " ' as character references, and the control characters
// neither allows (all below U+0020 but tab and newline, and DEL) as U+FFFD. Other bytes,
// UTF-8 included, pass unchanged.
std::string markup_escape(const std::string& text);

}  // namespace hearthray
