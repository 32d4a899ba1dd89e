// Outputs of a solve: the table for the terminal, surfaces.csv (one row per face, for a
// spreadsheet) and report.json (inputs echoed, view-factor statistics, solver status, results
// per surface with their faces, energy balance). Every report carries kEngineeringCaution.
#pragma once

#include <cstdint>
#include <iosfwd>
#include <optional>
#include <string>
#include <vector>

#include "hearthray/exchange.hpp"
#include "hearthray/fields.hpp"
#include "hearthray/io.hpp"  // TargetReportInfo
#include "hearthray/outer_case.hpp"
#include "hearthray/thermal_model.hpp"
#include "hearthray/units.hpp"

namespace hearthray {

inline constexpr const char* kEngineeringCaution =
    "These are engineering estimates from a gray, diffuse radiation model, not a safety "
    "assessment. Furnaces, kilns and heaters can cause fire, burns from hot surfaces (casings, "
    "doors, flues) and, when fired, carbon monoxide poisoning from flue gas. Their design, "
    "installation and operation follow local codes, the maker's instructions and licensed "
    "practice.";

// What report.json echoes besides the model and the result.
struct SolveReportInfo {
  std::string version;        // of the tool
  std::string scene;          // scene file
  std::string mesh;           // mesh file
  std::string unit;           // mesh length unit
  std::string surfaces_from;  // groups | materials
  std::uint64_t rays_per_patch = 0;
  std::uint64_t seed = 0;
  std::string sampler;  // "stratified" or "sobol" (sampler_name)
  std::uint64_t rays_total = 0;
  std::optional<double> trace_seconds;  // empty: the tallies came from the cache
  std::string cache_file;               // read or written; "" when the cache was not used
  std::string smoothing;                // method, or "none (raw)"
  int smoothing_iterations = 0;
  double max_correction_sigma = 0;    // largest smoothing change, in standard errors
  double escaped_fraction = 0;        // of all rays, as traced
  double back_face_fraction = 0;      // of all rays, as traced
  std::vector<std::string> warnings;  // from the ray diagnostics
  std::vector<std::string> notes;     // choices made (e.g. leaks folded back)
  std::vector<std::string> files;     // other files written with the report
  double model_height_m = 0;          // vertical extent of the model: the height of its case
  TargetReportInfo target;            // rounds to an error wanted (target.used)
};

// Per-surface table, energy balance, outer case temperatures (when walls lose heat) and solver
// status, then the caution.
void print_solve_table(std::ostream& out, const std::vector<SurfaceHeat>& surfaces,
                       const HeatBalance& balance, const ExchangeResult& result,
                       const std::vector<OuterCase>& cases = {}, UnitSystem units = UnitSystem::si);

// One row per face. Convection and wall loss of a two-sided surface are split over its faces
// by area, so the faces of a surface add up to its totals and each row balances:
// heat_input_W = net_W + convection_W + wall_loss_W.
// Values in `units`, each column's unit in its name (temperature_C or temperature_F, net_W or
// net_Btu_h, ...); temperature_K always; the last column says whether the solve converged.
void write_surfaces_csv(std::ostream& out, const ThermalModel& model, const ExchangeResult& result,
                        UnitSystem units = UnitSystem::si);

void write_solve_json(std::ostream& out, const SolveReportInfo& info, const ThermalModel& model,
                      const ExchangeResult& result);

std::string to_string(ExchangeStatus status);

// Title of a picture of a solved field: what, where, and whether the solve converged
// ("Temperature in °C, box-furnace (solve converged)"; "... NOT CONVERGED, not an answer").
std::string solved_picture_title(const std::string& quantity, const std::string& unit,
                                 const std::string& where,
                                 bool converged);  // "converged", "not_converged", "singular"

// Per-patch results for VTU files and pictures (one value per face of the model): temperature
// [°C], net radiative heat flux [W/m²] (leaving, positive out), irradiation and radiosity
// [W/m²], heat input flux [W/m²] (net radiation + convection + wall loss per m² of the face),
// and the largest standard error of the patch's view factors, sqrt(F(1-F)/N) over its row
// with the surroundings [-].
std::vector<PatchField> solve_fields(const ThermalModel& model, const ExchangeResult& result);

// The solved fields of a solve's surfaces.csv (written with any --units), back on the patches
// of the scene it solved: temperature [°C], net radiative flux, irradiation and radiosity
// [W/m²], and whether that solve converged. Throws InputError naming the file when it cannot be
// read, lacks a column, or its faces are not the patches (another scene or patching).
struct SolvedFields {
  std::vector<PatchField> fields;
  bool converged = false;
};
SolvedFields read_solved_fields(const std::string& surfaces_csv, const PatchSet& patches);

// A field of solve_fields in other units: temperature (°C) and heat fluxes (W/m²) converted,
// the unit renamed ("°F", "Btu/(h·ft²)"); other fields unchanged.
PatchField shown_in(const PatchField& field, UnitSystem units);

}  // namespace hearthray
