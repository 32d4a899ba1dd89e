#include "hearthray/gas_report.hpp"

#include <cstdio>
#include <nlohmann/json.hpp>
#include <ostream>

#include "core/text.hpp"
#include "hearthray/io.hpp"
#include "hearthray/thermal_report.hpp"
#include "hearthray/units.hpp"

namespace hearthray {

namespace {

double celsius(double K) {
  return K - kZeroCelsius;
}

// Figures a furnace designer reads first, from the run.
struct FurnaceFigures {
  double firing = 0, air = 0, load = 0, held = 0, walls = 0, surroundings = 0, flue = 0;
  double balance = 0;
  double efficiency = 0;  // heat to the load / firing rate
};

FurnaceFigures figures(const GasRun& run) {
  FurnaceFigures f;
  const ZoneSolveResult& s = run.solve;
  f.firing = s.heat_released;
  f.air = s.air_enthalpy_in;
  f.load = run.heat_to_load();
  f.held = run.heat_to_held_patches();
  f.walls = run.heat_through_walls();
  f.surroundings = s.to_surroundings;
  f.flue = s.flue_enthalpy;
  f.balance = s.balance_error;
  f.efficiency = f.firing > 0 ? f.load / f.firing : 0;
  return f;
}

std::string kw(double W) {
  return rounded("%.2f kW", W / 1e3);
}

}  // namespace

void print_gas_surfaces(std::ostream& out, const GasRun& run, const Scene& scene,
                        const PatchSet& patches) {
  const std::size_t S = scene.surfaces.size();
  std::vector<double> area(S, 0), weighted_T(S, 0), takes(S, 0), convection(S, 0), loss(S, 0);
  for (std::size_t p = 0; p < patches.size(); ++p) {
    const std::uint32_t s = patches.patches[p].surface;
    const double a = patches.patches[p].area;
    const ZonePatchResult& r = run.solve.patches[p];
    area[s] += a;
    weighted_T[s] += r.temperature * a;
    takes[s] += r.convection_in - r.net_out;
    convection[s] += r.convection_in;
    loss[s] += r.wall_loss;
  }
  char line[200];
  std::snprintf(line, sizeof line, "%-20s %10s %10s %14s %14s %14s\n", "surface", "area m2", "T C",
                "takes kW", "of it conv. kW", "wall loss kW");
  out << line;
  for (std::size_t s = 0; s < S; ++s) {
    if (area[s] == 0) continue;
    std::snprintf(line, sizeof line, "%-20s %10.3f %10.1f %14.2f %14.2f %14.2f\n",
                  scene.surfaces[s].name.c_str(), area[s], celsius(weighted_T[s] / area[s]),
                  takes[s] / 1e3, convection[s] / 1e3, loss[s] / 1e3);
    out << line;
  }
}

void print_gas_table(std::ostream& out, const GasRun& run) {
  const ZoneSolveResult& s = run.solve;
  out << "gas: " << run.gases.describe() << "\n";
  if (run.combustion) {
    const Combustion& c = *run.combustion;
    out << "firing: " << c.fuel.name << ", " << kw(c.firing_rate) << ", excess air "
        << percent(c.excess_air) << ", O2 in dry flue gas " << percent(c.flue_o2_dry) << ", air "
        << rounded("%.0f C", celsius(c.air_temperature)) << ", products "
        << rounded("%.4g kg/s", c.products_mass_flow) << ", adiabatic flame "
        << rounded("%.0f C", celsius(c.adiabatic_flame_temperature)) << "\n";
  }
  char line[256];
  std::snprintf(line, sizeof line, "%-6s %10s %10s %12s %12s %12s %12s %12s %12s\n", "zone",
                "volume m3", "T C", "released kW", "emitted kW", "absorbed kW", "conv. kW", "in kW",
                "out kW");
  out << line;
  for (std::size_t z = 0; z < s.zones.size(); ++z) {
    const ZoneGasResult& r = s.zones[z];
    std::snprintf(
        line, sizeof line, "%-6zu %10.4g %10.1f %12.2f %12.2f %12.2f %12.2f %12.2f %12.2f\n", z,
        run.exchange.volume[z], celsius(r.temperature), r.heat_release / 1e3, r.emitted / 1e3,
        r.absorbed / 1e3, r.convection_out / 1e3, r.enthalpy_in / 1e3, r.enthalpy_out / 1e3);
    out << line;
  }
  const FurnaceFigures f = figures(run);
  if (run.combustion) {
    if (!run.input.load.empty()) out << "heat to the load: " << kw(f.load) << "\n";
    out << "heat to other surfaces of given temperature (openings, held walls): " << kw(f.held)
        << "\n";
    out << "through walls of solved temperature: " << kw(f.walls)
        << "; to the surroundings: " << kw(f.surroundings) << "\n";
    out << "flue gas: " << rounded("%.0f C", celsius(s.flue_temperature)) << ", carrying "
        << kw(f.flue) << " above 25 C (" << percent(f.flue / f.firing) << " of the firing rate)\n";
    if (!run.input.load.empty())
      out << "efficiency (heat to the load / firing rate): " << percent(f.efficiency) << "\n";
  }
  out << "energy balance: release + air - load - other held - walls - surroundings - flue = "
      << rounded("%.3g W", f.balance) << "\n";
  out << "zone solve: " << (s.converged ? "converged" : "NOT converged: " + s.message) << " in "
      << s.iterations << " Newton iterations";
  if (s.iterative)
    out << " (sparse exchange areas: " << s.linear_iterations << " GMRES iterations)";
  out << "\n";
  for (const std::string& w : run.warnings) out << "warning: " << w << "\n";
  if (run.combustion) out << kFiredEquipmentCaution << "\n";
}

void write_zones_csv(std::ostream& out, const GasRun& run) {
  const GasExchange& x = run.exchange;
  out << "zone,i,j,k,x_m,y_m,z_m,volume_m3,volume_se_m3,temperature_K,heat_release_W,"
         "emitted_W,absorbed_W,convection_out_W,enthalpy_in_W,enthalpy_out_W,held_W,converged\n";
  const char* converged = run.solve.converged ? "yes" : "no";  // on every row
  for (std::size_t z = 0; z < x.zone_count(); ++z) {
    const auto c = x.grid.cell_index(x.zone_cell[z]);
    const Box3 b = x.grid.cell_box(x.zone_cell[z]);
    const Vec3 m = (b.lo + b.hi) * 0.5;
    const ZoneGasResult& r = run.solve.zones[z];
    out << z << ',' << c[0] << ',' << c[1] << ',' << c[2] << ',' << shortest(m.x) << ','
        << shortest(m.y) << ',' << shortest(m.z) << ',' << shortest(x.volume[z]) << ','
        << shortest(x.volume_error[z]) << ',' << shortest(r.temperature) << ','
        << shortest(r.heat_release) << ',' << shortest(r.emitted) << ',' << shortest(r.absorbed)
        << ',' << shortest(r.convection_out) << ',' << shortest(r.enthalpy_in) << ','
        << shortest(r.enthalpy_out) << ',' << shortest(r.imbalance) << ',' << converged << '\n';
  }
}

void write_gas_patches_csv(std::ostream& out, const GasRun& run,
                           const std::vector<std::string>& names) {
  out << "patch,temperature_K,emitted_W,absorbed_W,net_out_W,convection_in_W,wall_loss_W,"
         "converged\n";
  const char* converged = run.solve.converged ? "yes" : "no";  // on every row
  for (std::size_t p = 0; p < run.solve.patches.size(); ++p) {
    const ZonePatchResult& r = run.solve.patches[p];
    out << csv_field(names[p]) << ',' << shortest(r.temperature) << ',' << shortest(r.emitted)
        << ',' << shortest(r.absorbed) << ',' << shortest(r.net_out) << ','
        << shortest(r.convection_in) << ',' << shortest(r.wall_loss) << ',' << converged << '\n';
  }
}

std::string gas_report_json(const GasRun& run, const std::vector<std::string>& names) {
  using nlohmann::json;
  const ZoneSolveResult& s = run.solve;
  const GasExchange& x = run.exchange;
  json j;
  j["properties"] = run.gases.describe();
  json gases = json::array();
  for (std::size_t g = 0; g < run.gases.size(); ++g)
    gases.push_back({{"absorption_coefficient_per_m", run.gases.absorption_coefficient(g)}});
  j["gray_gases"] = gases;
  j["cells"] = {x.grid.cells()[0], x.grid.cells()[1], x.grid.cells()[2]};
  j["exchange_areas"] = {{"storage", x.dense() ? "dense" : "sparse"},
                         {"stored_areas", x.non_zeros()},
                         {"smoothed", x.smoothed},
                         {"smoothing_iterations", run.smoothing.iterations},
                         {"max_row_error", run.smoothing.max_row_error},
                         {"max_reciprocity_error", run.smoothing.max_reciprocity_error},
                         {"max_correction_sigma", run.smoothing.max_correction_sigma}};
  if (run.combustion) {
    const Combustion& c = *run.combustion;
    j["firing"] = {{"fuel", c.fuel.name},
                   {"firing_rate_W", c.firing_rate},
                   {"excess_air", c.excess_air},
                   {"flue_o2_dry", c.flue_o2_dry},
                   {"air_temperature_K", c.air_temperature},
                   {"fuel_mass_flow_kg_s", c.fuel_mass_flow},
                   {"air_mass_flow_kg_s", c.air_mass_flow},
                   {"products_mass_flow_kg_s", c.products_mass_flow},
                   {"p_h2o_atm", c.p_h2o},
                   {"p_co2_atm", c.p_co2},
                   {"adiabatic_flame_temperature_K", c.adiabatic_flame_temperature}};
  }
  json zones = json::array();
  for (std::size_t z = 0; z < x.zone_count(); ++z) {
    const ZoneGasResult& r = s.zones[z];
    zones.push_back({{"zone", z},
                     {"volume_m3", x.volume[z]},
                     {"temperature_K", r.temperature},
                     {"heat_release_W", r.heat_release},
                     {"emitted_W", r.emitted},
                     {"absorbed_W", r.absorbed},
                     {"enthalpy_in_W", r.enthalpy_in},
                     {"enthalpy_out_W", r.enthalpy_out},
                     {"convection_out_W", r.convection_out},
                     {"held_W", r.imbalance}});
  }
  j["zones"] = zones;
  json patches = json::array();
  for (std::size_t p = 0; p < s.patches.size(); ++p) {
    const ZonePatchResult& r = s.patches[p];
    patches.push_back({{"patch", names[p]},
                       {"temperature_K", r.temperature},
                       {"net_out_W", r.net_out},
                       {"convection_in_W", r.convection_in},
                       {"wall_loss_W", r.wall_loss}});
  }
  j["patches"] = patches;
  const FurnaceFigures f = figures(run);
  j["balance"] = {{"heat_released_W", f.firing}, {"air_enthalpy_in_W", f.air},
                  {"to_load_W", f.load},         {"to_other_held_surfaces_W", f.held},
                  {"through_walls_W", f.walls},  {"to_surroundings_W", f.surroundings},
                  {"flue_enthalpy_W", f.flue},   {"flue_temperature_K", s.flue_temperature},
                  {"efficiency", f.efficiency},  {"error_W", f.balance}};
  j["solver"] = {{"converged", s.converged},
                 {"method", s.iterative ? "Newton-Krylov (GMRES), sparse" : "Newton, dense LU"},
                 {"iterations", s.iterations},
                 {"linear_iterations", s.linear_iterations},
                 {"max_residual_W", s.max_residual},
                 {"message", s.message}};
  j["warnings"] = run.warnings;
  return j.dump(2, ' ', false, json::error_handler_t::replace);
}

void write_gas_report(std::ostream& out, const GasReportInfo& info, const GasRun& run,
                      const std::vector<std::string>& patch_names) {
  using nlohmann::json;
  json j;
  j["tool"] = "hearthray " + info.version;
  j["scene"] = info.scene;
  j["mesh"] = info.mesh;
  j["seed"] = info.seed;
  j["files"] = info.files;
  j["gas"] = json::parse(gas_report_json(run, patch_names));
  j["cautions"] = {kEngineeringCaution, kFiredEquipmentCaution};
  out << j.dump(2, ' ', false, json::error_handler_t::replace) << '\n';
}

}  // namespace hearthray
