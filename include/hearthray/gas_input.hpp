// The [gas] table of a scene file: a radiating combustion gas filling the enclosure, split
// into zones, with its properties and, optionally, the firing that makes it.
//
//   [gas]
//   cells = [6, 1, 1]                  # zones: a grid over the enclosure's box along x, y, z
//   rays_per_cell = 100_000            # optional (default 100000)
//   # the radiating properties, one of:
//   absorption_coefficient = "0.3 1/m"                        # a gray gas
//   partial_pressures = { h2o = "0.18 atm", co2 = "0.09 atm" } # weighted sum of gray gases
//   #   (neither, with [gas.firing]: the partial pressures of the products)
//   soot = { volume_fraction = 1e-7, temperature = "1400 C" }  # optional gray addition
//   # the zone temperatures, one of:
//   temperature = "1250 C"             # every zone held at this temperature
//   flow = "+x"                        # with [gas.firing]: products flow along +x (or -x, +y,
//                                      # ...) zone to zone to the flue; "stirred": one zone
//   release = [0.7, 0.3]               # shares of the firing rate released in the first zones
//                                      # along the flow (default: all in the first)
//   load = ["billet_1", "billet_2"]    # optional: the surfaces that are the load (for the
//                                      # heat to the load and the efficiency)
//   [gas.firing]
//   fuel = "natural gas"               # natural gas (as methane) | methane | propane | fuel oil
//   carbon_hydrogen_ratio = 6.5        # fuel oil: C/H by mass
//   heating_value = "42.7 MJ/kg"       # fuel oil: lower heating value (default 42.7 MJ/kg)
//   rate = "300 kW"                    # firing rate on the lower heating value (W, kW, MW)
//   excess_air = "10 %"                # or flue_o2 = "3 %" (O2 in the dry flue gas)
//   air_temperature = "25 C"           # combustion air (default 25 C)
//
// Unknown keys are errors naming the key and the line; every quantity carries its unit.
#pragma once

#include <array>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "hearthray/combustion.hpp"
#include "hearthray/gas_properties.hpp"

namespace hearthray {

struct GasInput {
  std::array<int, 3> cells{1, 1, 1};
  std::uint64_t rays_per_cell = 100000;
  std::optional<double> absorption_coefficient;  // 1/m
  std::optional<GasComposition> composition;     // partial pressures (atm) and soot
  double soot_volume_fraction = 0;
  double soot_temperature = 1500;     // K
  std::optional<double> temperature;  // K, every zone held at it
  enum class Flow { none, stirred, plug } flow = Flow::none;
  int flow_axis = 0;            // 0, 1, 2 for x, y, z (plug flow)
  int flow_direction = 1;       // +1 or -1 along the axis
  std::vector<double> release;  // shares of the firing rate along the flow
  std::optional<CombustionInput> firing;
  std::vector<std::string> load;  // surfaces that are the load
  int line = 0;
};

// Reads the [gas] table of a TOML document given as text (`source` names it in messages); the
// scene-file reader reads the same table from a scene file. Throws InputError.
GasInput parse_gas_table(const std::string& toml_text, const std::string& source);

// The gray gases the input describes (the products of the firing when it gives no partial
// pressures). Throws InputError for states outside the WSGG fit.
GrayGasSet gas_properties(const GasInput& input, const Combustion* combustion);

}  // namespace hearthray
