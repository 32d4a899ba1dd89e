// Axis labels of the line charts (error against rays): one notation per logarithmic axis.
// The expected labels are plain arithmetic (powers of ten), no outside source needed.
#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <vector>

#include "pictures/line_chart.hpp"

using hearthray::pictures::log_ticks;
using hearthray::pictures::Tick;

namespace {

std::vector<std::string> labels(const std::vector<Tick>& ticks) {
  std::vector<std::string> out;
  for (const Tick& t : ticks) out.push_back(t.label);
  return out;
}

bool any_power_notation(const std::vector<Tick>& ticks) {
  for (const Tick& t : ticks)
    if (t.label.find("10⁰") != std::string::npos || t.label.find("10¹") != std::string::npos ||
        t.label.find("10²") != std::string::npos || t.label.find("10³") != std::string::npos ||
        t.label.find("10⁴") != std::string::npos || t.label.find("10⁵") != std::string::npos ||
        t.label.find("10⁻") != std::string::npos)
      return true;
  return false;
}

}  // namespace

TEST_CASE("log axis: ticks within 0.001 .. 1000 are written as plain numbers", "[line-chart]") {
  // 1 .. 1000: three decades, powers of ten only.
  const auto ticks = log_ticks(0.0, 3.0);
  CHECK(labels(ticks) == std::vector<std::string>{"1", "10", "100", "1000"});
  for (const Tick& t : ticks) CHECK(std::pow(10.0, t.value) == Approx(std::stod(t.label)));
}

TEST_CASE("log axis: an axis reaching 10^4 writes every tick as a power of ten", "[line-chart]") {
  // 1000 .. 400,000 rays per patch, as in the sampling benchmark: no mix of "1000" and "10⁴".
  const auto ticks = log_ticks(3.0, std::log10(4e5));
  CHECK(labels(ticks) ==
        std::vector<std::string>{"10³", "2·10³", "5·10³", "10⁴", "2·10⁴", "5·10⁴", "10⁵", "2·10⁵"});
  // 100 .. 10⁶: over three decades, the powers of ten alone.
  CHECK(labels(log_ticks(2.0, 6.0)) == std::vector<std::string>{"10²", "10³", "10⁴", "10⁵", "10⁶"});
  // Errors from 8.7e-5 to 7.7e-3: negative powers, same notation throughout.
  const auto errors = log_ticks(std::log10(8e-5), std::log10(8e-3));
  for (const Tick& t : errors) CHECK(t.label.find("10⁻") != std::string::npos);
}

TEST_CASE("log axis: under three decades the 2 and 5 between are labelled alike", "[line-chart]") {
  // 0.002 .. 0.05: plain numbers, 2 and 5 times the powers included.
  const auto plain = log_ticks(std::log10(0.002), std::log10(0.05));
  CHECK(labels(plain) == std::vector<std::string>{"0.002", "0.005", "0.01", "0.02", "0.05"});
  CHECK_FALSE(any_power_notation(plain));
  // 2e-5 .. 5e-4: beyond 0.001, so powers of ten with their multiples.
  const auto small = log_ticks(std::log10(2e-5), std::log10(5e-4));
  CHECK(labels(small) == std::vector<std::string>{"2·10⁻⁵", "5·10⁻⁵", "10⁻⁴", "2·10⁻⁴", "5·10⁻⁴"});
  for (const Tick& t : small) {  // each label names the value it sits at
    const double m = t.label.rfind("2·", 0) == 0 ? 2 : t.label.rfind("5·", 0) == 0 ? 5 : 1;
    const double e = std::floor(t.value + 1e-9);
    CHECK(std::pow(10.0, t.value) == Approx(m * std::pow(10.0, e)));
  }
}
