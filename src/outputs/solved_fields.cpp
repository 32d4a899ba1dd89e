// Solved fields read back from a solve's surfaces.csv (see thermal_report.hpp), so that
// `render` can draw a solve's answer without solving again.
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <map>

#include "hearthray/error.hpp"
#include "hearthray/thermal_report.hpp"

namespace hearthray {
namespace {

// One CSV line into fields: commas separate, a field in double quotes may hold commas and
// doubled quotes (as csv_field writes them).
std::vector<std::string> split_csv(const std::string& line) {
  std::vector<std::string> out(1);
  bool quoted = false;
  for (std::size_t i = 0; i < line.size(); ++i) {
    const char c = line[i];
    if (quoted) {
      if (c == '"' && i + 1 < line.size() && line[i + 1] == '"') {
        out.back() += '"';
        ++i;
      } else if (c == '"') {
        quoted = false;
      } else {
        out.back() += c;
      }
    } else if (c == '"') {
      quoted = true;
    } else if (c == ',') {
      out.emplace_back();
    } else if (c != '\r') {
      out.back() += c;
    }
  }
  return out;
}

// The column whose name is `stem` + "_" + a heat-flux unit key of any unit system, and that
// unit; throws naming the file when there is none.
std::pair<std::size_t, ResultUnit> flux_column(const std::map<std::string, std::size_t>& columns,
                                               const std::string& stem, const std::string& path) {
  for (UnitSystem system : {UnitSystem::si, UnitSystem::us, UnitSystem::kcal}) {
    const ResultUnit unit = result_unit(system, ResultKind::heat_flux);
    const auto it = columns.find(stem + "_" + unit.key);
    if (it != columns.end()) return {it->second, unit};
  }
  throw InputError("'" + path + "' has no column " + stem +
                   "_W_m2 (or in other units): is it the surfaces.csv a solve writes?");
}

}  // namespace

SolvedFields read_solved_fields(const std::string& path, const PatchSet& patches) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError("cannot read '" + path + "': give the folder a solve wrote with -o");
  std::string line;
  std::getline(in, line);
  std::map<std::string, std::size_t> columns;
  const std::vector<std::string> header = split_csv(line);
  for (std::size_t c = 0; c < header.size(); ++c) columns[header[c]] = c;
  for (const char* needed : {"face", "temperature_K", "converged"})
    if (!columns.count(needed))
      throw InputError("'" + path + "' has no column '" + needed +
                       "': is it the surfaces.csv a solve of this version writes?");
  const std::size_t face = columns["face"], kelvin = columns["temperature_K"];
  const std::size_t converged = columns["converged"];
  const auto [net, net_unit] = flux_column(columns, "net_flux", path);
  const auto [irr, irr_unit] = flux_column(columns, "irradiation", path);
  const auto [rad, rad_unit] = flux_column(columns, "radiosity", path);

  const std::size_t n = patches.size();
  SolvedFields out;
  out.converged = true;
  PatchField temperature{"temperature", "\u00b0C", std::vector<double>(n, NAN)};
  PatchField net_flux{"net radiative flux", "W/m\u00b2", std::vector<double>(n, NAN)};
  PatchField irradiation{"irradiation", "W/m\u00b2", std::vector<double>(n, NAN)};
  PatchField radiosity{"radiosity", "W/m\u00b2", std::vector<double>(n, NAN)};
  std::size_t row = 0;
  while (std::getline(in, line)) {
    if (line.empty()) continue;
    const std::vector<std::string> cells = split_csv(line);
    if (cells.size() != header.size())
      throw InputError("'" + path + "' row " + std::to_string(row + 2) + " has " +
                       std::to_string(cells.size()) + " fields, the header " +
                       std::to_string(header.size()));
    if (row >= n || cells[face] != patches.patches[row].name)
      throw InputError("'" + path + "' row " + std::to_string(row + 2) + " is face '" +
                       cells[face] + "', but patch " + std::to_string(row + 1) +
                       " of the scene is " +
                       (row < n ? "'" + patches.patches[row].name + "'" : "missing") +
                       ": the results are from another scene or patching; solve this scene again");
    auto number = [&](std::size_t c) { return std::strtod(cells[c].c_str(), nullptr); };
    temperature.values[row] = number(kelvin) - kZeroCelsius;
    net_flux.values[row] = net_unit.to_si(number(net));
    irradiation.values[row] = irr_unit.to_si(number(irr));
    radiosity.values[row] = rad_unit.to_si(number(rad));
    out.converged = out.converged && cells[converged] == "yes";
    ++row;
  }
  if (row != n)
    throw InputError("'" + path + "' has " + std::to_string(row) + " face rows, the scene " +
                     std::to_string(n) +
                     " patches: the results are from another scene or "
                     "patching; solve this scene again");
  out.fields = {temperature, net_flux, irradiation, radiosity};
  return out;
}

}  // namespace hearthray
