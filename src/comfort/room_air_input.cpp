// The [room_air] table (see include/hearthray/room_air.hpp). Every key is checked and every
// quantity carries its unit.
#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdlib>

#include "comfort/comfort_input_toml.hpp"
#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/scene_file.hpp"

namespace hearthray {
namespace {

const std::vector<std::string> kRoomAirKeys = {"ventilation", "outside", "gains",
                                               "volume",      "density", "heat_capacity"};

using Units = std::vector<std::pair<std::string, double>>;  // spelling without spaces, to SI

class RoomAirReader {
 public:
  explicit RoomAirReader(std::string path) : path_(std::move(path)) {}

  [[noreturn]] void fail(const toml::node& node, const std::string& message) const {
    throw InputError(path_ + ":" + std::to_string(node.source().begin.line) + ": " + message);
  }

  std::string text(const toml::node& node, const std::string& key,
                   const std::string& example) const {
    if (const auto* s = node.as_string()) return s->get();
    fail(node, key + " in [room_air] must be a string with its unit, like " + key + " = \"" +
                   example + "\"");
  }

  // A number and one of `units`; the unit found is returned through `which`.
  double value(const toml::node& node, const std::string& key, const Units& units,
               const std::string& example, std::size_t* which = nullptr) const {
    const std::string s = text(node, key, example);
    std::vector<std::string> names;
    for (std::size_t k = 0; k < units.size(); ++k) {
      names.push_back(units[k].first);
      double v = 0;
      if (!number_with_unit(s, {units[k]}, &v)) continue;
      if (which) *which = k;
      return v;
    }
    fail(node, key + " in [room_air] is \"" + s +
                   "\"; write it as a number with one of the units " + join(names) + ", like " +
                   key + " = \"" + example + "\"");
  }

  double positive(const toml::node& node, const std::string& key, const Units& units,
                  const std::string& example) const {
    const double v = value(node, key, units, example);
    if (!(v > 0)) fail(node, key + " in [room_air] must be positive");
    return v;
  }

  RoomAirInput read(const toml::node& node) const {
    const toml::table* t = node.as_table();
    if (!t) fail(node, "room_air must be a table [room_air]");
    for (auto&& [key, n] : *t) {
      const std::string k(key.str());
      if (std::find(kRoomAirKeys.begin(), kRoomAirKeys.end(), k) == kRoomAirKeys.end())
        fail(n, "unknown key '" + k + "' in [room_air]; expected one of " + join(kRoomAirKeys));
    }
    RoomAirInput in;
    in.line = int(t->source().begin.line);
    const toml::node* vent = t->get("ventilation");
    const toml::node* outside = t->get("outside");
    if (!vent || !outside)
      fail(node,
           "[room_air] needs ventilation and outside: e.g. ventilation = \"0.5 1/h\" (air "
           "changes per hour, or a flow such as \"30 m3/h\") and outside = \"-5 C\"");
    std::size_t which = 0;
    in.ventilation = value(*vent, "ventilation",
                           {{"1/h", 1.0}, {"m3/h", 1.0 / 3600}, {"m3/s", 1.0}, {"L/s", 1e-3}},
                           "0.5 1/h", &which);
    in.ventilation_kind =
        which == 0 ? VentilationKind::air_changes_per_hour : VentilationKind::volume_flow;
    if (!(in.ventilation >= 0)) fail(*vent, "ventilation in [room_air] must not be negative");
    try {
      in.outside_K = parse_temperature(text(*outside, "outside", "-5 C"), "outside");
    } catch (const InputError& e) {
      fail(*outside, std::string("in [room_air], ") + e.what());
    }
    if (const toml::node* g = t->get("gains"))
      in.gains_W = value(*g, "gains", {{"W", 1.0}, {"kW", 1e3}}, "150 W");
    if (const toml::node* v = t->get("volume"))
      in.volume_m3 = positive(*v, "volume", {{"m3", 1.0}, {"L", 1e-3}}, "54 m3");
    if (const toml::node* d = t->get("density"))
      in.density = positive(*d, "density", {{"kg/m3", 1.0}}, "1.2 kg/m3");
    if (const toml::node* c = t->get("heat_capacity"))
      in.heat_capacity =
          positive(*c, "heat_capacity", {{"J/kgK", 1.0}, {"kJ/kgK", 1e3}}, "1005 J/kgK");
    return in;
  }

 private:
  std::string path_;
};

}  // namespace

RoomAirInput read_room_air_table(const toml::node& node, const std::string& path) {
  return RoomAirReader(path).read(node);
}

}  // namespace hearthray
