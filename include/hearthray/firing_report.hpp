// Outputs of a firing: the summary for the terminal (segments, targets reached, energy and
// where it went, warnings, the kiln caution), firing.csv (one row per time step), the JSON
// block, and two pictures against time (temperatures with the set point; heating power).
#pragma once

#include <iosfwd>
#include <string>

#include "hearthray/firing.hpp"
#include "hearthray/picture.hpp"

namespace hearthray {

inline constexpr const char* kFiringCaution =
    "Kilns and furnaces in a firing: the chamber, the case, the lid and the flue reach "
    "temperatures that burn skin and ignite what is near; keep the clearances the maker "
    "gives, never leave a firing unattended, and ventilate (firing ware and fuel-fired kilns "
    "give off fumes and carbon monoxide). A computed schedule is an engineering estimate: the "
    "kiln's own controller, thermocouples and over-temperature cut-out decide. Follow the "
    "maker's instructions, local codes and licensed practice for wiring, gas and flues.";

// The summary, with units in every figure.
void print_firing_summary(std::ostream& out, const FiringResult& r, const FiringInput& in);

// time_s, time_h, segment, set_point_C (empty while cooling naturally), control_C, power_W,
// then one column per surface (C), per wall's outer face (C) and per load's inside (C).
void write_firing_csv(std::ostream& out, const FiringResult& r);

// The "firing" block of the report: schedule, segments, targets reached, energy, warnings.
std::string firing_report_json(const FiringResult& r, const FiringInput& in);

// Temperatures (C) against time (h): the set point dashed, the control point, each load and
// the hottest outer face of the walls; and the heating power (kW) against time.
Picture firing_temperature_picture(const FiringResult& r, const std::string& title);
Picture firing_power_picture(const FiringResult& r, const FiringInput& in,
                             const std::string& title);

}  // namespace hearthray
