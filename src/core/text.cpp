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

std::string join_at_most(const std::vector<std::string>& items, std::size_t most) {
  const std::vector<std::string> shown(
      items.begin(), items.begin() + std::ptrdiff_t(std::min(most, items.size())));
  std::string out = join(shown);
  if (items.size() > most) out += " and " + std::to_string(items.size() - most) + " more";
  return out;
}

}  // namespace hearthray
