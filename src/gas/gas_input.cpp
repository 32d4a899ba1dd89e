// The [gas] table (see include/hearthray/gas_input.hpp).
#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdlib>
#include <map>

#include "gas/gas_input_toml.hpp"
#include "hearthray/error.hpp"
#include "hearthray/scene_file.hpp"
#include "input/toml_reader.hpp"

namespace hearthray {

GrayGasSet gas_properties(const GasInput& in, const Combustion* combustion) {
  if (in.absorption_coefficient) return GrayGasSet::gray(*in.absorption_coefficient);
  GasComposition c;
  if (in.composition) {
    c = *in.composition;
  } else if (combustion) {
    c.p_h2o = combustion->p_h2o;
    c.p_co2 = combustion->p_co2;
  } else {
    throw InputError(
        "[gas]: no radiating properties: give absorption_coefficient, "
        "partial_pressures or [gas.firing]");
  }
  c.soot_volume_fraction = in.soot_volume_fraction;
  c.soot_temperature = in.soot_temperature;
  return GrayGasSet::wsgg(c);
}

namespace {

using input::Units;

class GasReader : public input::TomlReader {
 public:
  using TomlReader::TomlReader;

  GasInput read(const toml::node& node) const {
    const toml::table* t = node.as_table();
    if (!t) fail(node, "[gas] must be a table");
    only(*t,
         {"cells", "rays_per_cell", "absorption_coefficient", "partial_pressures", "soot",
          "temperature", "flow", "release", "firing", "load"},
         "[gas]");
    GasInput in;
    in.line = int(node.source().begin.line);
    if (const toml::node* n = t->get("cells")) in.cells = cells(*n);
    if (const toml::node* n = t->get("rays_per_cell")) {
      const auto v = n->value<std::int64_t>();
      if (!v || *v < 1) fail(*n, "rays_per_cell in [gas] must be a whole number >= 1");
      in.rays_per_cell = std::uint64_t(*v);
    }
    if (const toml::node* n = t->get("absorption_coefficient")) {
      in.absorption_coefficient = quantity(*n, "absorption_coefficient", "[gas]",
                                           {{"1/m", 1.0}, {"/m", 1.0}, {"m^-1", 1.0}}, "0.3 1/m");
      if (*in.absorption_coefficient < 0) fail(*n, "absorption_coefficient in [gas] must be >= 0");
    }
    if (const toml::node* n = t->get("partial_pressures")) in.composition = pressures(*n);
    if (const toml::node* n = t->get("soot")) soot(*n, &in);
    if (const toml::node* n = t->get("firing")) in.firing = firing(*n);
    if (in.absorption_coefficient && (in.composition || in.soot_volume_fraction > 0))
      fail(node,
           "[gas] gives absorption_coefficient with partial_pressures or soot; a gray "
           "gas is one or the other");
    if (!in.absorption_coefficient && !in.composition && !in.firing)
      fail(node,
           "[gas] needs its radiating properties: absorption_coefficient, "
           "partial_pressures, or a [gas.firing] table");
    if (const toml::node* n = t->get("temperature"))
      in.temperature = temperature(*n, "temperature", "[gas]");
    if (const toml::node* n = t->get("flow")) flow(*n, &in);
    if (const toml::node* n = t->get("release")) in.release = release(*n);
    if (const toml::node* n = t->get("load")) in.load = names(*n);
    check_zones(node, &in);
    return in;
  }

 private:
  std::array<int, 3> cells(const toml::node& node) const {
    const toml::array* a = node.as_array();
    std::array<int, 3> c{};
    if (!a || a->size() != 3)
      fail(node, "cells in [gas] must be three whole numbers, like [6, 1, 1]");
    for (int i = 0; i < 3; ++i) {
      const auto v = (*a)[std::size_t(i)].value<std::int64_t>();
      if (!v || *v < 1 || *v > 1000)
        fail(node, "cells in [gas] must be whole numbers from 1 to 1000");
      c[std::size_t(i)] = int(*v);
    }
    return c;
  }

  GasComposition pressures(const toml::node& node) const {
    const toml::table* t = node.as_table();
    if (!t)
      fail(node,
           "partial_pressures in [gas] must be a table, like { h2o = \"0.18 atm\", co2 = \"0.09 "
           "atm\" }");
    only(*t, {"h2o", "co2"}, "partial_pressures");
    const Units atm = {{"atm", 1.0}, {"kPa", 1 / 101.325}, {"bar", 1 / 1.01325}};
    GasComposition c;
    if (const toml::node* n = t->get("h2o"))
      c.p_h2o = quantity(*n, "h2o", "partial_pressures", atm, "0.18 atm");
    if (const toml::node* n = t->get("co2"))
      c.p_co2 = quantity(*n, "co2", "partial_pressures", atm, "0.09 atm");
    try {
      (void)GrayGasSet::wsgg(c);  // refuses states outside the fit, with the reason
    } catch (const InputError& e) {
      fail(node, e.what());
    }
    return c;
  }

  void soot(const toml::node& node, GasInput* in) const {
    const toml::table* t = node.as_table();
    if (!t)
      fail(node,
           "soot in [gas] must be a table, like { volume_fraction = 1e-7, temperature = \"1400 C\" "
           "}");
    only(*t, {"volume_fraction", "temperature"}, "soot");
    const toml::node* f = t->get("volume_fraction");
    const auto v = f ? f->value<double>() : std::nullopt;
    if (!v || !(*v >= 0 && *v <= 1e-4))
      fail(node,
           "soot needs volume_fraction = a number from 0 to 1e-4 (soot volume per gas volume)");
    in->soot_volume_fraction = *v;
    if (const toml::node* n = t->get("temperature"))
      in->soot_temperature = temperature(*n, "temperature", "soot");
  }

  CombustionInput firing(const toml::node& node) const {
    const toml::table* t = node.as_table();
    if (!t) fail(node, "[gas.firing] must be a table");
    only(*t,
         {"fuel", "carbon_hydrogen_ratio", "heating_value", "rate", "excess_air", "flue_o2",
          "air_temperature"},
         "[gas.firing]");
    CombustionInput c;
    const toml::node* fuel = t->get("fuel");
    if (!fuel)
      fail(node,
           "[gas.firing] needs fuel = \"natural gas\", \"methane\", \"propane\" or \"fuel oil\"");
    const std::string name = string(*fuel, "fuel", "[gas.firing]", "natural gas");
    const toml::node* ratio = t->get("carbon_hydrogen_ratio");
    const toml::node* lhv = t->get("heating_value");
    if (name == "natural gas" || name == "methane") {
      c.fuel = methane();
    } else if (name == "propane") {
      c.fuel = propane();
    } else if (name == "fuel oil") {
      const auto r = ratio ? ratio->value<double>() : std::nullopt;
      if (!r) fail(*fuel, "fuel oil needs carbon_hydrogen_ratio = its C/H mass ratio, like 6.5");
      const double value = lhv ? quantity(*lhv, "heating_value", "[gas.firing]",
                                          {{"MJ/kg", 1e6}, {"kJ/kg", 1e3}}, "42.7 MJ/kg")
                               : 42.7e6;
      try {
        c.fuel = fuel_oil(*r, value);
      } catch (const InputError& e) {
        fail(*fuel, e.what());
      }
    } else {
      fail(*fuel, "fuel in [gas.firing] is '" + name +
                      "'; write \"natural gas\", \"methane\", \"propane\" or \"fuel oil\"");
    }
    if (name != "fuel oil" && (ratio || lhv))
      fail(ratio ? *ratio : *lhv, "carbon_hydrogen_ratio and heating_value are for fuel oil only");
    const toml::node* rate = t->get("rate");
    if (!rate) fail(node, "[gas.firing] needs rate = the firing rate, like \"300 kW\"");
    try {
      c.firing_rate = parse_power(string(*rate, "rate", "[gas.firing]", "300 kW"), "rate");
    } catch (const InputError& e) {
      fail(*rate, std::string("in [gas.firing], ") + e.what());
    }
    const toml::node* excess = t->get("excess_air");
    const toml::node* o2 = t->get("flue_o2");
    if (excess && o2) fail(*o2, "[gas.firing] gives excess_air and flue_o2; give one");
    const Units percent = {{"%", 0.01}};
    if (excess) c.excess_air = quantity(*excess, "excess_air", "[gas.firing]", percent, "10 %");
    if (o2) c.flue_o2_dry = quantity(*o2, "flue_o2", "[gas.firing]", percent, "3 %");
    if (const toml::node* n = t->get("air_temperature"))
      c.air_temperature = temperature(*n, "air_temperature", "[gas.firing]");
    std::string why;
    if (!c.IsValid(&why)) fail(node, "[gas.firing]: " + why);
    return c;
  }

  void flow(const toml::node& node, GasInput* in) const {
    const std::string s = string(node, "flow", "[gas]", "+x");
    if (s == "stirred") {
      in->flow = GasInput::Flow::stirred;
      return;
    }
    const std::string axes = "xyz";
    if (s.size() != 2 || (s[0] != '+' && s[0] != '-') || axes.find(s[1]) == std::string::npos)
      fail(node, "flow in [gas] is '" + s +
                     "'; write \"+x\", \"-x\", \"+y\", \"-y\", \"+z\", "
                     "\"-z\" or \"stirred\"");
    in->flow = GasInput::Flow::plug;
    in->flow_axis = int(axes.find(s[1]));
    in->flow_direction = s[0] == '+' ? 1 : -1;
  }

  std::vector<double> release(const toml::node& node) const {
    const toml::array* a = node.as_array();
    if (!a || a->empty()) fail(node, "release in [gas] must be a list of shares, like [0.7, 0.3]");
    std::vector<double> shares;
    double sum = 0;
    for (const toml::node& e : *a) {
      const auto v = e.value<double>();
      if (!v || !(*v >= 0)) fail(node, "release in [gas]: every share must be a number >= 0");
      shares.push_back(*v);
      sum += *v;
    }
    if (std::fabs(sum - 1) > 1e-9) fail(node, "release in [gas]: the shares must add up to 1");
    return shares;
  }

  std::vector<std::string> names(const toml::node& node) const {
    const toml::array* a = node.as_array();
    std::vector<std::string> out;
    if (a)
      for (const toml::node& e : *a)
        if (const auto* s = e.as_string()) out.push_back(s->get());
    if (!a || out.empty() || out.size() != a->size())
      fail(node, "load in [gas] must be a list of surface names, like [\"billet_1\"]");
    return out;
  }

  void check_zones(const toml::node& node, GasInput* in) const {
    const bool flows = in->flow != GasInput::Flow::none;
    if (flows == in->temperature.has_value())
      fail(node,
           "[gas] needs either temperature (every zone held at it) or flow (zone "
           "temperatures solved from the firing), not both");
    if (flows && !in->firing) fail(node, "flow in [gas] needs a [gas.firing] table");
    if (!flows && in->firing)
      fail(node,
           "[gas.firing] is given but no flow: say flow = \"+x\" (or another axis, or "
           "\"stirred\")");
    if (!flows && !in->release.empty()) fail(node, "release in [gas] needs flow");
    if (in->flow == GasInput::Flow::stirred && in->cells != std::array<int, 3>{1, 1, 1})
      fail(node, "flow = \"stirred\" is one well-stirred zone: cells must be [1, 1, 1]");
    if (in->flow == GasInput::Flow::plug) {
      for (int a = 0; a < 3; ++a)
        if (a != in->flow_axis && in->cells[std::size_t(a)] != 1)
          fail(node,
               "plug flow along one axis needs the zones cut along that axis only "
               "(cells 1 across it)");
      if (int(in->release.size()) > in->cells[std::size_t(in->flow_axis)])
        fail(node, "release in [gas] lists more shares than there are zones along the flow");
    }
    if (flows && in->release.empty()) in->release = {1.0};
  }
};

}  // namespace

GasInput read_gas_table(const toml::node& node, const std::string& path) {
  return GasReader(path).read(node);
}

GasInput parse_gas_table(const std::string& text, const std::string& source) {
  toml::table root;
  try {
    root = toml::parse(text, source);
  } catch (const toml::parse_error& e) {
    throw InputError(source + ":" + std::to_string(e.source().begin.line) + ": " +
                     std::string(e.description()));
  }
  const toml::node* gas = root.get("gas");
  if (!gas) throw InputError(source + ": no [gas] table");
  return read_gas_table(*gas, source);
}

}  // namespace hearthray
