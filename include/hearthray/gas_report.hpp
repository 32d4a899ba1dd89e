// Outputs of a gas run: the gas table for the terminal, zones.csv (one row per zone),
// gas_patches.csv (one row per patch) and the "gas" block of report.json, with the furnace
// figures (heat to the load, flue temperature and loss, efficiency, energy balance) and the
// cautions for fired equipment.
#pragma once

#include <cstdint>
#include <iosfwd>
#include <string>
#include <vector>

#include "hearthray/gas_run.hpp"
#include "hearthray/picture.hpp"

namespace hearthray {

inline constexpr const char* kFiredEquipmentCaution =
    "Fired equipment: combustion needs its air supply; flue gas carries carbon monoxide and "
    "must leave safely; burners need flame-failure protection and a purge before ignition; "
    "hot surfaces burn. Follow the gas and fuel codes, the burner maker's instructions and "
    "licensed practice.";

// Per surface: area, area-weighted mean temperature, heat it takes by radiation, wall loss.
void print_gas_surfaces(std::ostream& out, const GasRun& run, const Scene& scene,
                        const PatchSet& patches);

// Zone table, furnace figures, balance, solver status and the cautions.
void print_gas_table(std::ostream& out, const GasRun& run);

// zone, cell (i, j, k), centre (m), volume (m^3) and its standard error, temperature, heat
// released, radiation emitted and absorbed, enthalpy in and out (W).
void write_zones_csv(std::ostream& out, const GasRun& run);

// patch, temperature, emitted, absorbed, net radiation out, wall loss (W).
void write_gas_patches_csv(std::ostream& out, const GasRun& run,
                           const std::vector<std::string>& patch_names);

// zones.vtu: each zone as a VTK_HEXAHEDRON (type 12) cell, its grid cell's box, with cell data
// "zone", "temperature [K]", "volume [m3]", "heat release [W]", "emitted [W]",
// "absorbed [W]". The file appears whole or not at all; throws InputError when it cannot be
// written.
void write_zones_vtu(const std::string& path, const GasRun& run);

// A cut through the zones: the plane through the middle of the grid across `across` (0, 1, 2
// for x, y, z; the other two axes are drawn), cells coloured by gas temperature in C, cells
// with no gas left blank, and the scene's surfaces where the plane cuts them.
Picture zone_cut_picture(const GasRun& run, const Scene& scene, int across = 1);

// The "gas" block of report.json as JSON text (an object).
std::string gas_report_json(const GasRun& run, const std::vector<std::string>& patch_names);

// What report.json of a gas run echoes besides the run.
struct GasReportInfo {
  std::string version, scene, mesh;
  std::uint64_t seed = 0;
  std::vector<std::string> files;  // other files written with the report
};
// report.json of a gas run: the echo, the "gas" block and the cautions.
void write_gas_report(std::ostream& out, const GasReportInfo& info, const GasRun& run,
                      const std::vector<std::string>& patch_names);

}  // namespace hearthray
