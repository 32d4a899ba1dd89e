#include "hearthray/units.hpp"

#include "hearthray/error.hpp"

namespace hearthray {

double metres_per(LengthUnit unit) {
  switch (unit) {
    case LengthUnit::mm:
      return 1e-3;
    case LengthUnit::cm:
      return 1e-2;
    case LengthUnit::m:
      return 1.0;
    case LengthUnit::in:
      return 0.0254;
    case LengthUnit::ft:
      return 0.3048;
  }
  return 1.0;
}

LengthUnit parse_length_unit(const std::string& text) {
  if (text == "mm") return LengthUnit::mm;
  if (text == "cm") return LengthUnit::cm;
  if (text == "m") return LengthUnit::m;
  if (text == "in") return LengthUnit::in;
  if (text == "ft") return LengthUnit::ft;
  throw InputError("unknown length unit '" + text + "': write one of mm, cm, m, in, ft");
}

std::string to_string(LengthUnit unit) {
  switch (unit) {
    case LengthUnit::mm:
      return "mm";
    case LengthUnit::cm:
      return "cm";
    case LengthUnit::m:
      return "m";
    case LengthUnit::in:
      return "in";
    case LengthUnit::ft:
      return "ft";
  }
  return "m";
}

}  // namespace hearthray
