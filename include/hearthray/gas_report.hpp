// Outputs of a gas run: the gas table for the terminal, zones.csv (one row per zone),
// gas_patches.csv (one row per patch) and the "gas" block of report.json, with the furnace
// figures (heat to the load, flue temperature and loss, efficiency, energy balance) and the
// cautions for fired equipment.
#pragma once

#include <iosfwd>
#include <string>
#include <vector>

#include "hearthray/gas_run.hpp"

namespace hearthray {

inline constexpr const char* kFiredEquipmentCaution =
    "Fired equipment: combustion needs its air supply; flue gas carries carbon monoxide and "
    "must leave safely; burners need flame-failure protection and a purge before ignition; "
    "hot surfaces burn. Follow the gas and fuel codes, the burner maker's instructions and "
    "licensed practice.";

// Zone table, furnace figures, balance, solver status and the cautions.
void print_gas_table(std::ostream& out, const GasRun& run);

// zone, cell (i, j, k), centre (m), volume (m^3) and its standard error, temperature, heat
// released, radiation emitted and absorbed, enthalpy in and out (W).
void write_zones_csv(std::ostream& out, const GasRun& run);

// patch, temperature, emitted, absorbed, net radiation out, wall loss (W).
void write_gas_patches_csv(std::ostream& out, const GasRun& run,
                           const std::vector<std::string>& patch_names);

// The "gas" block of report.json as JSON text (an object).
std::string gas_report_json(const GasRun& run, const std::vector<std::string>& patch_names);

}  // namespace hearthray
