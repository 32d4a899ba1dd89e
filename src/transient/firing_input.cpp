// The [firing] table of a scene file (see README, "Firing curves").
#include "input/toml_reader.hpp"
#include "transient/firing_input_toml.hpp"

namespace hearthray {
namespace {

using input::Units;

const Units kRate = {{"K/h", 1 / 3600.0},
                     {"C/h", 1 / 3600.0},
                     {"F/h", 5 / 9.0 / 3600},
                     {"K/min", 1 / 60.0},
                     {"C/min", 1 / 60.0}};
const Units kTime = {{"s", 1.0}, {"min", 60.0}, {"h", 3600.0}};
const Units kDifference = {{"K", 1.0}, {"C", 1.0}};
const Units kMass = {{"kg", 1.0}, {"g", 1e-3}, {"lb", 0.45359237}};
const Units kDensity = {{"kg/m3", 1.0}, {"kg/m^3", 1.0}, {"g/cm3", 1e3}};
const Units kSpecificHeat = {{"J/kgK", 1.0},  {"J/(kgK)", 1.0},  {"J/kg/K", 1.0},
                             {"kJ/kgK", 1e3}, {"kJ/(kgK)", 1e3}, {"kJ/kg/K", 1e3}};

class FiringReader : public input::TomlReader {
 public:
  using TomlReader::TomlReader;

  FiringInput read(const toml::node& node) const {
    const toml::table& t = table(node, "[firing]");
    only(t,
         {"control", "start", "power", "schedule", "band", "integral_time", "max_step", "tolerance",
          "cells_per_layer", "lag_limit", "max_hours", "surface"},
         "[firing]");
    FiringInput in;
    const toml::node* control = t.get("control");
    if (!control)
      fail(node, "[firing] needs control = the surface whose temperature the controller reads");
    in.control = string(*control, "control", "[firing]", "ware_1");
    if (const toml::node* n = t.get("start")) in.start_K = temperature(*n, "start", "[firing]");
    if (const toml::node* n = t.get("power"))
      in.power_W = scene_quantity(*n, "power", "[firing]", Quantity::power, "4.3 kW");
    const toml::node* schedule = t.get("schedule");
    if (!schedule) fail(node, "[firing] needs a schedule, like " + std::string(kScheduleExample));
    in.schedule = segments(*schedule);
    settings(t, &in);
    if (const toml::node* n = t.get("surface")) {
      for (auto&& [key, value] : table(*n, "[firing.surface]"))
        in.surfaces.emplace_back(std::string(key.str()),
                                 mass(value, "[firing.surface." + std::string(key.str()) + "]"));
    }
    std::string why;
    if (!in.IsValid(&why)) fail(node, "[firing]: " + why);
    return in;
  }

 private:
  static constexpr const char* kScheduleExample =
      "schedule = [{ ramp = \"100 K/h\", to = \"600 C\" }, { hold = \"30 min\" }, { cool = "
      "\"natural\", to = \"100 C\" }]";

  const toml::table& table(const toml::node& node, const std::string& name) const {
    if (const toml::table* t = node.as_table()) return *t;
    fail(node, name + " must be a table");
  }

  void settings(const toml::table& t, FiringInput* in) const {
    const std::string w = "[firing]";
    if (const toml::node* n = t.get("band"))
      in->band_K = quantity(*n, "band", w, kDifference, "20 K");
    if (const toml::node* n = t.get("integral_time"))
      in->integral_s = quantity(*n, "integral_time", w, kTime, "15 min");
    if (const toml::node* n = t.get("max_step"))
      in->max_step_s = quantity(*n, "max_step", w, kTime, "60 s");
    if (const toml::node* n = t.get("tolerance"))
      in->tolerance_K = quantity(*n, "tolerance", w, kDifference, "0.5 K");
    if (const toml::node* n = t.get("lag_limit"))
      in->lag_limit_K = quantity(*n, "lag_limit", w, kDifference, "10 K");
    if (const toml::node* n = t.get("cells_per_layer")) {
      const auto v = n->value<std::int64_t>();
      if (!v || *v < 1 || *v > 200) fail(*n, "cells_per_layer in [firing]: a whole number 1..200");
      in->cells_per_layer = int(*v);
    }
    if (const toml::node* n = t.get("max_hours")) {
      const auto v = n->value<double>();
      if (!v || !(*v > 0 && *v <= 10000)) fail(*n, "max_hours in [firing]: a number of hours");
      in->hours_max = *v;
    }
  }

  std::vector<ScheduleSegment> segments(const toml::node& node) const {
    const toml::array* a = node.as_array();
    if (!a || a->empty())
      fail(node, "schedule in [firing] must be a list, like " + std::string(kScheduleExample));
    std::vector<ScheduleSegment> out;
    for (const toml::node& e : *a) out.push_back(segment(e));
    for (std::size_t i = 0; i + 1 < out.size(); ++i)
      if (out[i].kind == ScheduleSegment::Kind::cool)
        fail(node, "schedule in [firing]: natural cooling ends the firing; put it last");
    return out;
  }

  ScheduleSegment segment(const toml::node& e) const {
    const toml::table* t = e.as_table();
    if (!t) fail(e, "each step of the schedule is a table, like " + std::string(kScheduleExample));
    only(*t, {"ramp", "to", "hold", "cool"}, "a schedule step");
    ScheduleSegment g;
    const toml::node* to = t->get("to");
    if (const toml::node* n = t->get("ramp")) {
      g.kind = ScheduleSegment::Kind::ramp;
      g.rate = quantity(*n, "ramp", "the schedule", kRate, "100 K/h");
      if (!to) fail(e, "a ramp needs to = its target temperature, like to = \"600 C\"");
    } else if (const toml::node* n = t->get("hold")) {
      g.kind = ScheduleSegment::Kind::hold;
      g.duration = quantity(*n, "hold", "the schedule", kTime, "30 min");
      if (to) fail(*to, "a hold keeps the temperature reached; it takes no 'to'");
    } else if (const toml::node* n = t->get("cool")) {
      g.kind = ScheduleSegment::Kind::cool;
      if (string(*n, "cool", "the schedule", "natural") != "natural")
        fail(*n,
             "cool = \"natural\" is the only cooling (power off); a controlled cooling is "
             "a ramp down, like { ramp = \"100 K/h\", to = \"600 C\" }");
      if (!to) fail(e, "natural cooling needs to = where the firing ends, like to = \"100 C\"");
    } else {
      fail(e, "a schedule step is a ramp, a hold or cool: " + std::string(kScheduleExample));
    }
    if (to) g.target = temperature(*to, "to", "the schedule");
    return g;
  }

  SurfaceMass mass(const toml::node& node, const std::string& where) const {
    const toml::table& t = table(node, where);
    only(t, {"layers", "outside", "mass", "specific_heat", "thickness", "conductivity", "slab"},
         where);
    SurfaceMass m;
    if (const toml::node* n = t.get("layers")) {
      m.kind = SurfaceMass::Kind::wall;
      const toml::array* a = n->as_array();
      if (!a || a->empty()) fail(*n, "layers in " + where + " must be a list of layer tables");
      for (const toml::node& l : *a) m.layers.push_back(layer(l, "a layer of " + where));
      if (const toml::node* o = t.get("outside")) m.outside = outside(*o, where);
      for (const char* k : {"mass", "specific_heat", "thickness", "conductivity", "slab"})
        if (t.get(k)) fail(*t.get(k), std::string(k) + " in " + where + ": a wall has layers only");
    } else if (const toml::node* n = t.get("slab")) {
      m.kind = SurfaceMass::Kind::slab;
      m.layers.push_back(layer(*n, "slab of " + where));
    } else {
      m.kind = SurfaceMass::Kind::lumped;
      const toml::node* mass = t.get("mass");
      const toml::node* c = t.get("specific_heat");
      if (!mass || !c)
        fail(node, where +
                       " needs layers (a wall), slab (a load conducted through its "
                       "thickness) or mass and specific_heat (a lumped load)");
      m.mass = quantity(*mass, "mass", where, kMass, "6 kg");
      m.specific_heat = quantity(*c, "specific_heat", where, kSpecificHeat, "900 J/kgK");
      if (const toml::node* n2 = t.get("thickness"))
        m.thickness = scene_quantity(*n2, "thickness", where, Quantity::length, "8 mm");
      if (const toml::node* n2 = t.get("conductivity"))
        m.conductivity =
            scene_quantity(*n2, "conductivity", where, Quantity::conductivity, "1.2 W/mK");
    }
    if (m.kind != SurfaceMass::Kind::wall && t.get("outside"))
      fail(*t.get("outside"), "outside in " + where + ": only a wall has an outer face");
    return m;
  }

  WallLayer layer(const toml::node& node, const std::string& where) const {
    const toml::table& t = table(node, where);
    only(t, {"thickness", "conductivity", "density", "specific_heat"}, where);
    for (const char* k : {"thickness", "conductivity", "density", "specific_heat"})
      if (!t.get(k))
        fail(node, where +
                       " needs thickness, conductivity, density and specific_heat, like "
                       "{ thickness = \"115 mm\", conductivity = \"0.2 W/mK\", density = "
                       "\"600 kg/m3\", specific_heat = \"1000 J/kgK\" }");
    WallLayer l;
    l.thickness =
        scene_quantity(*t.get("thickness"), "thickness", where, Quantity::length, "115 mm");
    const toml::node& k = *t.get("conductivity");
    if (k.is_array())
      l.conductivity_table = conductivity_table(k, where);
    else
      l.conductivity = scene_quantity(k, "conductivity", where, Quantity::conductivity, "0.2 W/mK");
    l.density = quantity(*t.get("density"), "density", where, kDensity, "600 kg/m3");
    l.specific_heat =
        quantity(*t.get("specific_heat"), "specific_heat", where, kSpecificHeat, "1000 J/kgK");
    return l;
  }

  // [["200 C", "0.1 W/mK"], ["1000 C", "0.2 W/mK"]], rising in temperature.
  std::vector<std::pair<double, double>> conductivity_table(const toml::node& node,
                                                            const std::string& where) const {
    std::vector<std::pair<double, double>> table;
    for (const toml::node& row : *node.as_array()) {
      const toml::array* pair = row.as_array();
      if (!pair || pair->size() != 2)
        fail(row, "conductivity in " + where +
                      " as a table: pairs like [\"200 C\", \"0.1 W/mK\"], rising in temperature");
      const double T = temperature(*pair->get(0), "conductivity", where);
      const double k =
          scene_quantity(*pair->get(1), "conductivity", where, Quantity::conductivity, "0.2 W/mK");
      if (!table.empty() && T <= table.back().first)
        fail(row, "conductivity in " + where + ": temperatures must rise from row to row");
      table.emplace_back(T, k);
    }
    if (table.empty()) fail(node, "conductivity in " + where + ": the table is empty");
    return table;
  }

  OuterFilm outside(const toml::node& node, const std::string& where) const {
    const toml::table& t = table(node, "outside of " + where);
    only(t, {"room", "h", "emissivity"}, "outside of " + where);
    OuterFilm f;
    if (const toml::node* n = t.get("room")) f.room_K = temperature(*n, "room", where);
    if (const toml::node* n = t.get("h"))
      f.h = scene_quantity(*n, "h", where, Quantity::heat_transfer_coefficient, "5 W/m2K");
    if (const toml::node* n = t.get("emissivity")) {
      const auto v = n->value<double>();
      if (!v || !(*v >= 0 && *v <= 1)) fail(*n, "emissivity of the outside: a number 0..1");
      f.emissivity = *v;
    }
    return f;
  }
};

}  // namespace

FiringInput read_firing_table(const toml::node& node, const std::string& path) {
  return FiringReader(path).read(node);
}

}  // namespace hearthray
