#include "core/text.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <cstdio>

namespace hearthray {

std::string shortest(double v) {
  if (std::isnan(v)) return "nan";  // never "-nan"
  char buffer[32];                  // the longest double, "-2.2250738585072014e-308", is 24
  const auto end = std::to_chars(buffer, buffer + sizeof buffer, v).ptr;
  return std::string(buffer, end);
}

std::string rounded(const char* spec, double v) {
  const int length = std::snprintf(nullptr, 0, spec, v);
  if (length <= 0) return {};
  std::string out(std::size_t(length), '\0');
  std::snprintf(out.data(), out.size() + 1, spec, v);
  return out;
}

std::string percent(double fraction) {
  return rounded(fraction >= 0.001 ? "%.1f %%" : "%.2g %%", 100 * fraction);
}

std::string join(const std::vector<std::string>& items, const std::string& separator) {
  std::string out;
  for (std::size_t i = 0; i < items.size(); ++i) out += (i ? separator : "") + items[i];
  return out;
}

std::string join_and(const std::vector<std::string>& items) {
  if (items.size() < 2) return join(items);
  const std::vector<std::string> head(items.begin(), items.end() - 1);
  return join(head) + " and " + items.back();
}

std::string markup_escape(const std::string& text) {
  std::string out;
  out.reserve(text.size());
  for (const char ch : text) {
    const auto c = static_cast<unsigned char>(ch);
    switch (ch) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      case '\'':
        out += "&#39;";
        break;
      default:
        if ((c < 0x20 && ch != '\n' && ch != '\t') || c == 0x7f)
          out += "\xEF\xBF\xBD";  // U+FFFD
        else
          out += ch;
    }
  }
  return out;
}

std::string join_at_most(const std::vector<std::string>& items, std::size_t most) {
  const std::vector<std::string> shown(
      items.begin(), items.begin() + std::ptrdiff_t(std::min(most, items.size())));
  std::string out = join(shown);
  if (items.size() > most) out += " and " + std::to_string(items.size() - most) + " more";
  return out;
}

std::size_t display_width(const std::string& utf8) {
  std::size_t w = 0;
  for (unsigned char c : utf8) w += (c & 0xC0) != 0x80 ? 1 : 0;  // not a continuation byte
  return w;
}

std::string TextTable::text() const {
  const std::size_t n = columns_.size();
  std::vector<std::size_t> width(n, 0);
  auto cell = [&](const std::vector<std::string>& row, std::size_t k) -> const std::string& {
    static const std::string blank;
    return k < row.size() ? row[k] : blank;
  };
  for (std::size_t k = 0; k < n; ++k) {
    width[k] = display_width(columns_[k].header);
    for (const auto& row : rows_) width[k] = std::max(width[k], display_width(cell(row, k)));
  }
  std::string out;
  auto line = [&](auto&& text_of) {
    std::string row;
    for (std::size_t k = 0; k < n; ++k) {
      const std::string& t = text_of(k);
      const std::string fill(width[k] - display_width(t), ' ');
      const bool right = columns_[k].align == Align::right;
      row += (k ? "  " : "") + (right ? fill + t : t + (k + 1 < n ? fill : ""));
    }
    out += row.substr(0, row.find_last_not_of(' ') + 1) + "\n";
  };
  line([&](std::size_t k) -> const std::string& { return columns_[k].header; });
  for (const auto& row : rows_)
    line([&](std::size_t k) -> const std::string& { return cell(row, k); });
  return out;
}

}  // namespace hearthray
