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
#include "hearthray/thermal_model.hpp"

namespace hearthray {

inline constexpr const char* kEngineeringCaution =
    "These are engineering estimates from a gray, diffuse radiation model. Furnace, kiln and "
    "heater design follows local codes, the maker's instructions and licensed practice.";

// What report.json echoes besides the model and the result.
struct SolveReportInfo {
  std::string version;        // of the tool
  std::string scene;          // scene file
  std::string mesh;           // mesh file
  std::string unit;           // mesh length unit
  std::string surfaces_from;  // groups | materials
  std::uint64_t rays_per_patch = 0;
  std::uint64_t seed = 0;
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
};

// Per-surface table, energy balance and solver status, then the caution.
void print_solve_table(std::ostream& out, const std::vector<SurfaceHeat>& surfaces,
                       const HeatBalance& balance, const ExchangeResult& result);

// One row per face. Convection and wall loss of a two-sided surface are split over its faces
// by area, so the faces of a surface add up to its totals and each row balances:
// heat_input_W = net_W + convection_W + wall_loss_W.
void write_surfaces_csv(std::ostream& out, const ThermalModel& model, const ExchangeResult& result);

void write_solve_json(std::ostream& out, const SolveReportInfo& info, const ThermalModel& model,
                      const ExchangeResult& result);

std::string to_string(ExchangeStatus status);  // "converged", "not_converged", "singular"

// Per-patch results for VTU files and pictures (one value per face of the model): temperature
// [°C], net radiative heat flux [W/m²] (leaving, positive out), irradiation and radiosity
// [W/m²], heat input flux [W/m²] (net radiation + convection + wall loss per m² of the face),
// and the largest standard error of the patch's view factors, sqrt(F(1-F)/N) over its row
// with the surroundings [-].
std::vector<PatchField> solve_fields(const ThermalModel& model, const ExchangeResult& result);

}  // namespace hearthray
