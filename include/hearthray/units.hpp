// Units. SI inside (metres, kelvin, watts); the scene file says the mesh's length unit and
// writes every quantity with its unit.
#pragma once

#include <string>

namespace hearthray {

// Stefan-Boltzmann constant, CODATA 2018 (exact in the 2019 SI), W m^-2 K^-4.
inline constexpr double kStefanBoltzmann = 5.670374419e-8;

// pi, to the precision of a double.
inline constexpr double kPi = 3.14159265358979323846;

// 0 degrees Celsius in kelvin (exact, by the definition of the Celsius scale).
inline constexpr double kZeroCelsius = 273.15;

// The International Table BTU and kilocalorie in joules (exact by definition: 1 cal_IT =
// 4.1868 J, and 1 BTU_IT = 1 cal_IT/(g C) x 1 lb x 1 F = 4.1868 x 453.59237 x 5/9 J).
inline constexpr double kJoulesPerKcal = 4186.8;
inline constexpr double kJoulesPerBtu = 4.1868 * 453.59237 * 5.0 / 9.0;  // 1055.05585262

enum class LengthUnit { mm, cm, m, in, ft };

// Metres in one unit (1 in = 0.0254 m and 1 ft = 0.3048 m exactly, by the 1959 agreement).
double metres_per(LengthUnit unit);
// "mm", "cm", "m", "in", "ft"; anything else throws InputError listing the valid names.
LengthUnit parse_length_unit(const std::string& text);
std::string to_string(LengthUnit unit);

// Units results are shown in: SI (C, W, W/m2), US customary (F, Btu/h, Btu/(h ft2), ft2) or
// metric with kilocalories (C, kcal/h, kcal/(h m2)). Inside, everything stays SI.
enum class UnitSystem { si, us, kcal };
// "si", "us", "kcal"; anything else throws InputError listing the valid names.
UnitSystem parse_unit_system(const std::string& text);
std::string to_string(UnitSystem system);

enum class ResultKind { temperature, power, heat_flux, area, heat_transfer_coefficient };

// One quantity in one system: shown = SI value x scale + offset (temperatures from kelvin).
struct ResultUnit {
  std::string label;  // for tables, ASCII: "F", "Btu/h", "Btu/h/ft2"
  std::string text;   // for pictures: "°F", "Btu/(h·ft²)"
  std::string key;    // for CSV headers and JSON keys: "F", "Btu_h", "Btu_h_ft2"
  double scale = 1, offset = 0;
  double from_si(double si) const { return si * scale + offset; }
  double to_si(double shown) const { return (shown - offset) / scale; }
};
ResultUnit result_unit(UnitSystem system, ResultKind kind);

}  // namespace hearthray
