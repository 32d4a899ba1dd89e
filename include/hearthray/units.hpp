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

enum class LengthUnit { mm, cm, m, in, ft };

// Metres in one unit (1 in = 0.0254 m and 1 ft = 0.3048 m exactly, by the 1959 agreement).
double metres_per(LengthUnit unit);
// "mm", "cm", "m", "in", "ft"; anything else throws InputError listing the valid names.
LengthUnit parse_length_unit(const std::string& text);
std::string to_string(LengthUnit unit);

}  // namespace hearthray
