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

UnitSystem parse_unit_system(const std::string& text) {
  if (text == "si" || text == "SI") return UnitSystem::si;
  if (text == "us" || text == "US") return UnitSystem::us;
  if (text == "kcal") return UnitSystem::kcal;
  throw InputError("unknown unit system '" + text +
                   "': write si (C, W, W/m2), us (F, Btu/h, Btu/(h ft2)) or kcal (C, kcal/h, "
                   "kcal/(h m2))");
}

std::string to_string(UnitSystem system) {
  switch (system) {
    case UnitSystem::si:
      return "si";
    case UnitSystem::us:
      return "us";
    case UnitSystem::kcal:
      return "kcal";
  }
  return "si";
}

ResultUnit result_unit(UnitSystem system, ResultKind kind) {
  constexpr double kFoot = 0.3048;
  const double btu_h = kJoulesPerBtu / 3600, kcal_h = kJoulesPerKcal / 3600;  // W
  const bool us = system == UnitSystem::us, kcal = system == UnitSystem::kcal;
  switch (kind) {
    case ResultKind::temperature:
      if (us) return {"F", "\u00b0F", "F", 9.0 / 5.0, 32 - kZeroCelsius * 9.0 / 5.0};
      return {"C", "\u00b0C", "C", 1, -kZeroCelsius};
    case ResultKind::power:
      if (us) return {"Btu/h", "Btu/h", "Btu_h", 1 / btu_h};
      if (kcal) return {"kcal/h", "kcal/h", "kcal_h", 1 / kcal_h};
      return {"W", "W", "W", 1};
    case ResultKind::heat_flux:
      if (us) return {"Btu/h/ft2", "Btu/(h\u00b7ft\u00b2)", "Btu_h_ft2", kFoot * kFoot / btu_h};
      if (kcal) return {"kcal/h/m2", "kcal/(h\u00b7m\u00b2)", "kcal_h_m2", 1 / kcal_h};
      return {"W/m2", "W/m\u00b2", "W_m2", 1};
    case ResultKind::area:
      if (us) return {"ft2", "ft\u00b2", "ft2", 1 / (kFoot * kFoot)};
      return {"m2", "m\u00b2", "m2", 1};
    case ResultKind::heat_transfer_coefficient:
      if (us)
        return {"Btu/h/ft2/F", "Btu/(h\u00b7ft\u00b2\u00b7\u00b0F)", "Btu_h_ft2_F",
                kFoot * kFoot / btu_h / 1.8};
      if (kcal)
        return {"kcal/h/m2/C", "kcal/(h\u00b7m\u00b2\u00b7\u00b0C)", "kcal_h_m2_C", 1 / kcal_h};
      return {"W/m2K", "W/(m\u00b2\u00b7K)", "W_m2K", 1};
  }
  return {"", "", "", 1};
}

}  // namespace hearthray
