// Quantities with units as written in scene files ("1250 C", "1.5 kW", "6 W/m2K"). A number
// without a unit, or with a unit of another quantity, is an error naming the units accepted:
// guessing a unit is how a 1250 C hearth becomes a 1250 K one.
#include <cctype>
#include <cmath>
#include <cstdlib>
#include <string>
#include <vector>

#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/scene_file.hpp"
#include "hearthray/units.hpp"

namespace hearthray {
namespace {

// SI value = (number + pre_offset) * factor + post_offset.
struct UnitDef {
  const char* normalized;  // after normalize_unit()
  double factor;
  double pre_offset = 0;
  double post_offset = 0;
};

struct QuantityDef {
  const char* noun;          // "temperature"
  const char* example;       // number used in messages when the text has none
  const char* example_unit;  // unit used in the suggestion
  const char* listed;        // units as shown to the user
  std::vector<UnitDef> units;
};

// The trade writes the BTU as BTU, Btu or btu, the hour as h or hr, "Btuh" for Btu/h, and
// degrees as F or degF: one form each ("BTU", "h", "F", "C").
std::string trade_spelling(std::string s) {
  auto replace_all = [&s](const std::string& from, const std::string& to) {
    for (std::size_t at = s.find(from); at != std::string::npos; at = s.find(from, at + to.size()))
      s.replace(at, from.size(), to);
  };
  for (const char* btu : {"Btu", "btu"}) replace_all(btu, "BTU");
  replace_all("BTUh", "BTU/h");
  replace_all("hr", "h");
  replace_all("deg", "");
  replace_all("KCAL", "kcal");
  return s;
}

// Spellings of one unit collapse to one form: blanks, brackets, '^', '*', the middle dot and
// the degree sign go; superscript two becomes 2. "W/(m² K)" -> "W/m2K".
std::string normalize_unit(const std::string& unit) {
  std::string out;
  for (std::size_t i = 0; i < unit.size(); ++i) {
    const unsigned char c = static_cast<unsigned char>(unit[i]);
    if (c == 0xC2 && i + 1 < unit.size()) {
      const unsigned char d = static_cast<unsigned char>(unit[i + 1]);
      if (d == 0xB2) {  // superscript two
        out += '2';
        ++i;
        continue;
      }
      if (d == 0xB0 || d == 0xB7) {  // degree sign, middle dot
        ++i;
        continue;
      }
    }
    if (std::isspace(c) || c == '(' || c == ')' || c == '^' || c == '*' || c == '.' || c == '-')
      continue;
    out += static_cast<char>(c);
  }
  return trade_spelling(out);
}

// Length of the leading decimal number in s ([+-]digits[.digits][(e|E)[+-]digits]), 0 if none.
std::size_t number_prefix(const std::string& s) {
  std::size_t i = 0;
  if (i < s.size() && (s[i] == '+' || s[i] == '-')) ++i;
  std::size_t digits = 0;
  while (i < s.size() && std::isdigit(static_cast<unsigned char>(s[i]))) ++i, ++digits;
  if (i < s.size() && s[i] == '.') {
    ++i;
    while (i < s.size() && std::isdigit(static_cast<unsigned char>(s[i]))) ++i, ++digits;
  }
  if (digits == 0) return 0;
  if (i < s.size() && (s[i] == 'e' || s[i] == 'E')) {
    std::size_t j = i + 1;
    if (j < s.size() && (s[j] == '+' || s[j] == '-')) ++j;
    std::size_t exp_digits = 0;
    while (j < s.size() && std::isdigit(static_cast<unsigned char>(s[j]))) ++j, ++exp_digits;
    if (exp_digits > 0) i = j;
  }
  return i;
}

std::string trim(const std::string& s) {
  const auto first = s.find_first_not_of(" \t");
  if (first == std::string::npos) return "";
  return s.substr(first, s.find_last_not_of(" \t") - first + 1);
}

// 'write WHAT = "NUMBER UNIT" (units: ...)', with the number of `text` (or the example when
// it has none).
std::string advice(const QuantityDef& q, const std::string& text, const std::string& what) {
  const std::string trimmed = trim(text);
  const std::size_t n = number_prefix(trimmed);
  const std::string number = n > 0 ? trimmed.substr(0, n) : std::string(q.example);
  return "write " + what + " = \"" + number + " " + q.example_unit + "\" (units: " + q.listed + ")";
}

double parse_with(const QuantityDef& q, const std::string& raw, const std::string& what) {
  const std::string text = trim(raw);
  const std::size_t n = number_prefix(text);
  if (n == 0) {
    throw InputError(what + " \"" + raw +
                     "\" does not start with a number: " + advice(q, raw, what));
  }
  const std::string number = text.substr(0, n);
  const std::string unit = trim(text.substr(n));
  if (unit.empty())
    throw InputError(what + " \"" + raw + "\" has no unit: " + advice(q, raw, what));
  const double value = std::strtod(number.c_str(), nullptr);
  if (!std::isfinite(value)) {
    throw InputError(what + " \"" + raw + "\" is not a finite number");
  }
  const std::string key = normalize_unit(unit);
  for (const UnitDef& u : q.units) {
    if (key == u.normalized) return (value + u.pre_offset) * u.factor + u.post_offset;
  }
  throw InputError(what + " \"" + raw + "\": '" + unit + "' is not a unit of " + q.noun +
                   "; write it with one of " + q.listed + ", like " + what + " = \"" + q.example +
                   " " + q.example_unit + "\"");
}

// Trade units: the International Table BTU (1055.05585262 J) and kilocalorie (4186.8 J), the
// hour, the foot and the degree Fahrenheit (units.hpp). Temperature differences in a unit
// (per F, per C) scale by 5/9 and 1.
constexpr double kBtuPerHour = kJoulesPerBtu / 3600;    // W
constexpr double kKcalPerHour = kJoulesPerKcal / 3600;  // W
constexpr double kFoot = 0.3048, kSquareFoot = kFoot * kFoot;
constexpr double kPerFahrenheit = 9.0 / 5.0;  // 1/F in 1/K

// long function: one table of units per quantity, data rather than logic.
const QuantityDef& definition(Quantity quantity) {
  static const QuantityDef temperature{
      "temperature",
      "1250",
      "C",
      "C, K, F",
      {{"C", 1.0, 0.0, kZeroCelsius}, {"K", 1.0}, {"F", 5.0 / 9.0, -32.0, kZeroCelsius}}};
  static const QuantityDef power{"power",
                                 "1200",
                                 "W",
                                 "W, kW, MW, Btu/h, kBtu/h, MBtu/h, kcal/h, Mcal/h",
                                 {{"W", 1.0},
                                  {"kW", 1e3},
                                  {"MW", 1e6},
                                  {"BTU/h", kBtuPerHour},
                                  {"kBTU/h", 1e3 * kBtuPerHour},
                                  {"MBH", 1e3 * kBtuPerHour},  // trade: thousand Btu/h
                                  {"MBTU/h", 1e6 * kBtuPerHour},
                                  {"MMBTU/h", 1e6 * kBtuPerHour},
                                  {"kcal/h", kKcalPerHour},
                                  {"Mcal/h", 1e3 * kKcalPerHour}}};
  static const QuantityDef heat_flux{"heat flux",
                                     "350",
                                     "W/m2",
                                     "W/m2, kW/m2, Btu/(h ft2), kcal/(h m2)",
                                     {{"W/m2", 1.0},
                                      {"kW/m2", 1e3},
                                      {"BTU/hft2", kBtuPerHour / kSquareFoot},
                                      {"BTU/h/ft2", kBtuPerHour / kSquareFoot},
                                      {"BTU/ft2h", kBtuPerHour / kSquareFoot},
                                      {"kcal/hm2", kKcalPerHour},
                                      {"kcal/h/m2", kKcalPerHour},
                                      {"kcal/m2h", kKcalPerHour}}};
  static const QuantityDef heat_transfer_coefficient{
      "heat transfer coefficient",
      "6",
      "W/m2K",
      "W/m2K (also W/(m2 K) or W/m2/K), Btu/(h ft2 F), kcal/(h m2 C)",
      {{"W/m2K", 1.0},
       {"W/m2/K", 1.0},
       {"W/Km2", 1.0},
       {"W/m2C", 1.0},
       {"BTU/hft2F", kBtuPerHour / kSquareFoot * kPerFahrenheit},
       {"BTU/h/ft2/F", kBtuPerHour / kSquareFoot * kPerFahrenheit},
       {"kcal/hm2C", kKcalPerHour},
       {"kcal/h/m2/C", kKcalPerHour},
       {"kcal/hm2K", kKcalPerHour}}};
  static const QuantityDef length{
      "length",
      "230",
      "mm",
      "mm, cm, m, in, ft",
      {{"mm", 1e-3}, {"cm", 1e-2}, {"m", 1.0}, {"in", 0.0254}, {"ft", kFoot}}};
  static const QuantityDef conductivity{
      "thermal conductivity",
      "0.3",
      "W/mK",
      "W/mK (also W/(m K) or W/m/K), Btu/(h ft F), Btu in/(h ft2 F), kcal/(h m C)",
      {{"W/mK", 1.0},
       {"W/m/K", 1.0},
       {"W/Km", 1.0},
       {"W/mC", 1.0},
       {"BTU/hftF", kBtuPerHour / kFoot * kPerFahrenheit},
       {"BTU/h/ft/F", kBtuPerHour / kFoot * kPerFahrenheit},
       {"BTUin/hft2F", kBtuPerHour * 0.0254 / kSquareFoot * kPerFahrenheit},
       {"kcal/hmC", kKcalPerHour},
       {"kcal/h/m/C", kKcalPerHour},
       {"kcal/hmK", kKcalPerHour}}};
  switch (quantity) {
    case Quantity::temperature:
      return temperature;
    case Quantity::power:
      return power;
    case Quantity::heat_flux:
      return heat_flux;
    case Quantity::heat_transfer_coefficient:
      return heat_transfer_coefficient;
    case Quantity::length:
      return length;
    case Quantity::conductivity:
      return conductivity;
  }
  return temperature;
}

}  // namespace

std::string unit_advice(Quantity quantity, const std::string& text, const std::string& what) {
  return advice(definition(quantity), text, what);
}

double parse_quantity(Quantity quantity, const std::string& text, const std::string& what) {
  switch (quantity) {
    case Quantity::temperature:
      return parse_temperature(text, what);
    case Quantity::power:
      return parse_power(text, what);
    case Quantity::heat_flux:
      return parse_heat_flux(text, what);
    case Quantity::heat_transfer_coefficient:
      return parse_heat_transfer_coefficient(text, what);
    case Quantity::length:
      return parse_length(text, what);
    case Quantity::conductivity:
      return parse_conductivity(text, what);
  }
  return parse_temperature(text, what);
}

double parse_temperature(const std::string& text, const std::string& what) {
  const double kelvin = parse_with(definition(Quantity::temperature), text, what);
  if (kelvin < 0) {
    throw InputError(what + " \"" + text +
                     "\" is below absolute zero (0 K = -273.15 C = -459.67 F)");
  }
  if (kelvin > kMaxTemperatureK) {
    throw InputError(what + " \"" + text + "\" is " + rounded("%.6g", kelvin) + " K, above the " +
                     rounded("%.0f", kMaxTemperatureK) +
                     " K this tool accepts: no solid surface exists that hot (the most "
                     "refractory materials melt below 4,300 K); is the unit right?");
  }
  return kelvin;
}

double parse_power(const std::string& text, const std::string& what) {
  return parse_with(definition(Quantity::power), text, what);
}

double parse_heat_flux(const std::string& text, const std::string& what) {
  return parse_with(definition(Quantity::heat_flux), text, what);
}

double parse_heat_transfer_coefficient(const std::string& text, const std::string& what) {
  const double h = parse_with(definition(Quantity::heat_transfer_coefficient), text, what);
  if (h < 0) throw InputError(what + " \"" + text + "\" is negative; it must be >= 0");
  return h;
}

double parse_length(const std::string& text, const std::string& what) {
  const double metres = parse_with(definition(Quantity::length), text, what);
  if (metres < 0) throw InputError(what + " \"" + text + "\" is negative; it must be >= 0");
  return metres;
}

double parse_conductivity(const std::string& text, const std::string& what) {
  const double k = parse_with(definition(Quantity::conductivity), text, what);
  if (!(k > 0)) throw InputError(what + " \"" + text + "\" must be positive");
  return k;
}

}  // namespace hearthray

namespace hearthray {

TargetError parse_target_error(const std::string& raw, const std::string& what) {
  const std::string text = trim(raw);
  const std::string example =
      " (a number such as 0.001: every view factor to within a standard error of 0.001; or a "
      "percentage such as \"0.5 %\": every surface's net heat flow to within 0.5 %)";
  const std::size_t percent_sign = text.find('%');
  const bool relative = percent_sign != std::string::npos;
  const std::string number = relative ? trim(text.substr(0, percent_sign)) : text;
  const std::size_t n = number_prefix(number);
  if (n == 0 || n != number.size() || (relative && percent_sign + 1 != text.size()))
    throw InputError(what + " \"" + raw + "\" is not a plain number or percentage" + example);
  const double value = std::strtod(number.c_str(), nullptr);
  if (relative) {
    if (!(value > 0 && value < 100)) {
      throw InputError(what + " \"" + raw +
                       "\" is out of range: a relative error on heat flows lies above 0 % and "
                       "below 100 %" +
                       example);
    }
    return {value / 100, true};
  }
  if (!(value > 0 && value < 0.5)) {
    throw InputError(what + " \"" + raw +
                     "\" is out of range: the standard error of a view factor lies between 0 "
                     "and 0.5, so give a number above 0 and below 0.5" +
                     example);
  }
  return {value, false};
}

double parse_time_limit(const std::string& text, const std::string& what) {
  static const QuantityDef time{
      "time", "10", "min", "s, min, h", {{"s", 1.0}, {"min", 60.0}, {"h", 3600.0}}};
  const double seconds = parse_with(time, text, what);
  if (!(seconds > 0)) throw InputError(what + " \"" + text + "\" must be above zero");
  return seconds;
}

}  // namespace hearthray
