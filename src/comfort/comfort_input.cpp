// The [comfort] table (see include/hearthray/comfort_input.hpp). Like the rest of the scene
// file, every key is checked and every length carries its unit.
#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdlib>

#include "comfort/comfort_input_toml.hpp"
#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/pmv.hpp"
#include "hearthray/scene_file.hpp"

namespace hearthray {
namespace {

const std::vector<std::string> kComfortKeys = {
    "air_temperature", "air_speed",        "rays", "point", "grid", "metabolic_rate",
    "clothing",        "relative_humidity"};
const std::vector<std::string> kPersonKeys = {"metabolic_rate", "clothing", "relative_humidity"};
const std::vector<std::string> kPointKeys = {"position", "kind"};
const std::vector<std::string> kGridKeys = {"height", "spacing", "margin", "kind"};

// The simple operative-temperature form of ISO 7726 / ASHRAE 55 is stated up to 1 m/s.
constexpr double kMaxAirSpeed = 1.0;

class ComfortReader {
 public:
  explicit ComfortReader(std::string path) : path_(std::move(path)) {}

  [[noreturn]] void fail(const toml::node& node, const std::string& message) const {
    throw InputError(path_ + ":" + std::to_string(node.source().begin.line) + ": " + message);
  }

  void check_keys(const toml::table& t, const std::vector<std::string>& allowed,
                  const std::string& table_name) const {
    for (auto&& [key, node] : t) {
      const std::string k(key.str());
      if (std::find(allowed.begin(), allowed.end(), k) != allowed.end()) continue;
      const int line = key.source().begin.line > 0 ? int(key.source().begin.line)
                                                   : int(node.source().begin.line);
      throw InputError(path_ + ":" + std::to_string(line) + ": unknown key '" + k + "' in " +
                       table_name + "; expected one of " + join(allowed));
    }
  }

  const toml::table& table(const toml::node& node, const std::string& name) const {
    if (const toml::table* t = node.as_table()) return *t;
    fail(node, name + " must be a table");
  }

  std::string text(const toml::node& node, const std::string& key, const std::string& table_name,
                   const std::string& example) const {
    if (const auto* s = node.as_string()) return s->get();
    fail(node, key + " in " + table_name + " must be a string with its unit, like " + key +
                   " = \"" + example + "\"");
  }

  // A length that may be negative (a coordinate): parse_length refuses a minus sign.
  double coordinate(const toml::node& node, const std::string& what,
                    const std::string& table_name) const {
    std::string s = text(node, what, table_name, "1.2 m");
    const std::size_t first = s.find_first_not_of(" \t");
    const bool negative = first != std::string::npos && s[first] == '-';
    if (negative) s.erase(first, 1);
    try {
      const double v = parse_length(s, what);
      return negative ? -v : v;
    } catch (const InputError& e) {
      fail(node, "in " + table_name + ", " + e.what());
    }
  }

  double length(const toml::node& node, const std::string& key, const std::string& table_name,
                bool positive) const {
    double v = 0;
    try {
      v = parse_length(text(node, key, table_name, "0.5 m"), key);
    } catch (const InputError& e) {
      fail(node, "in " + table_name + ", " + e.what());
    }
    if (positive && !(v > 0)) fail(node, key + " in " + table_name + " must be positive");
    return v;
  }

  // "0.1 m/s": the only unit taken is m/s.
  double speed(const toml::node& node) const {
    const std::string s = text(node, "air_speed", "[comfort]", "0.1 m/s");
    double v = 0;
    if (!number_with_unit(s, {{"m/s", 1.0}}, &v)) {
      fail(node, "air_speed in [comfort] is \"" + s + "\"; write air_speed = \"0.1 m/s\"");
    }
    if (v < 0 || v > kMaxAirSpeed) {
      fail(node,
           "air_speed in [comfort] must be between 0 and 1 m/s (the simple operative "
           "temperature form of ISO 7726 / ASHRAE 55 holds up to 1 m/s); got \"" +
               s + "\"");
    }
    return v;
  }

  ComfortBody body(const toml::node& node, const std::string& table_name) const {
    const std::string s = text(node, "kind", table_name, "seated");
    if (s == "sphere") return ComfortBody::sphere;
    if (s == "seated") return ComfortBody::seated;
    if (s == "standing") return ComfortBody::standing;
    fail(node, "kind in " + table_name + " is '" + s +
                   "'; write kind = \"sphere\", \"seated\" or \"standing\"");
  }

  // A number and one of `units` (spaces ignored), as SI through the unit's factor.
  double with_unit(const toml::node& node, const std::string& key,
                   const std::vector<std::pair<std::string, double>>& units,
                   const std::string& example) const {
    const std::string s = text(node, key, "[comfort]", example);
    double v = 0;
    if (number_with_unit(s, units, &v)) return v;
    std::vector<std::string> names;
    for (const auto& unit : units) names.push_back(unit.first);
    fail(node, key + " in [comfort] is \"" + s + "\"; write it with one of the units " +
                   join(names) + ", like " + key + " = \"" + example + "\"");
  }

  // metabolic_rate, clothing, relative_humidity: all three or none; within ISO 7730's ranges.
  std::optional<PersonInput> person(const toml::table& t) const {
    std::vector<std::string> given;
    for (const std::string& k : kPersonKeys)
      if (t.get(k)) given.push_back(k);
    if (given.empty()) return std::nullopt;
    if (given.size() < kPersonKeys.size())
      fail(*t.get(given[0]), "[comfort] gives " + join(given) +
                                 ": PMV needs all of metabolic_rate = \"1.2 met\", "
                                 "clothing = \"1.0 clo\" and relative_humidity = \"50 %\"");
    PersonInput p;
    p.line = int(t.get(given[0])->source().begin.line);
    // 1 met = 58.15 W/m2, 1 clo = 0.155 m2K/W (ISO 7730; recalled).
    p.met = with_unit(*t.get("metabolic_rate"), "metabolic_rate",
                      {{"met", 1.0}, {"W/m2", 1 / 58.15}}, "1.2 met");
    p.clo =
        with_unit(*t.get("clothing"), "clothing", {{"clo", 1.0}, {"m2K/W", 1 / 0.155}}, "1.0 clo");
    p.relative_humidity =
        with_unit(*t.get("relative_humidity"), "relative_humidity", {{"%", 0.01}}, "50 %");
    const std::string problem = pmv_input_problem(p.met, p.clo, p.relative_humidity);
    if (!problem.empty()) fail(*t.get(given[0]), "in [comfort], " + problem);
    return p;
  }

  ComfortPointSpec point(const std::string& name, const toml::node& node) const {
    const std::string table_name = "[comfort.point." + name + "]";
    const toml::table& t = table(node, table_name);
    check_keys(t, kPointKeys, table_name);
    ComfortPointSpec p;
    p.name = name;
    p.line = int(t.source().begin.line);
    const toml::node* pos = t.get("position");
    const char* example = "position = [\"1.2 m\", \"2.0 m\", \"0.6 m\"]";
    if (!pos) fail(node, table_name + " has no position: write " + example);
    const toml::array* a = pos->as_array();
    if (!a || a->size() != 3) {
      fail(*pos, "position in " + table_name + " must be three lengths x, y, z: " + example);
    }
    p.position = {coordinate(*a->get(0), "x", table_name), coordinate(*a->get(1), "y", table_name),
                  coordinate(*a->get(2), "z", table_name)};
    if (const toml::node* k = t.get("kind")) p.body = body(*k, table_name);
    return p;
  }

  ComfortGridSpec grid(const toml::node& node) const {
    const std::string table_name = "[comfort.grid]";
    const toml::table& t = table(node, table_name);
    check_keys(t, kGridKeys, table_name);
    ComfortGridSpec g;
    g.line = int(t.source().begin.line);
    if (const toml::node* n = t.get("height")) g.height = length(*n, "height", table_name, false);
    if (const toml::node* n = t.get("spacing")) g.spacing = length(*n, "spacing", table_name, true);
    if (const toml::node* n = t.get("margin")) g.margin = length(*n, "margin", table_name, false);
    if (const toml::node* n = t.get("kind")) g.body = body(*n, table_name);
    return g;
  }

  double air_temperature(const toml::node& air) const {
    try {
      return parse_temperature(text(air, "air_temperature", "[comfort]", "20 C"),
                               "air_temperature");
    } catch (const InputError& e) {
      fail(air, std::string("in [comfort], ") + e.what());
    }
  }

  ComfortInput read(const toml::node& node, bool air_solved) const {
    const toml::table& t = table(node, "[comfort]");
    check_keys(t, kComfortKeys, "[comfort]");
    ComfortInput in;
    in.line = int(t.source().begin.line);
    const toml::node* air = t.get("air_temperature");
    if (air && air_solved)
      fail(*air,
           "air_temperature in [comfort] is given, but the scene has [room_air]: the air "
           "temperature is solved from the room's heat balance; remove air_temperature");
    if (!air && !air_solved)
      fail(node, "[comfort] has no air_temperature: write air_temperature = \"20 C\"");
    if (air) in.air_K = air_temperature(*air);
    if (const toml::node* v = t.get("air_speed")) in.air_speed = speed(*v);
    if (const toml::node* r = t.get("rays")) {
      const auto* i = r->as_integer();
      if (!i || i->get() < 100) {
        fail(*r, "rays in [comfort] must be a whole number of at least 100, like rays = 50_000");
      }
      in.rays = std::uint64_t(i->get());
    }
    if (const toml::node* pts = t.get("point")) {
      const toml::table& all = table(*pts, "[comfort.point]");
      for (auto&& [key, p] : all) in.points.push_back(point(std::string(key.str()), p));
      // toml++ keeps keys sorted; the file order is the order of the tables' lines.
      std::stable_sort(in.points.begin(), in.points.end(),
                       [](const auto& a, const auto& b) { return a.line < b.line; });
    }
    if (const toml::node* g = t.get("grid")) in.grid = grid(*g);
    in.person = person(t);
    if (in.points.empty() && !in.grid) {
      fail(node,
           "[comfort] has neither points nor a grid: add [comfort.point.NAME] with "
           "position = [\"1.2 m\", \"2.0 m\", \"0.6 m\"], or [comfort.grid] with height, "
           "spacing and margin");
    }
    return in;
  }

 private:
  std::string path_;
};

}  // namespace

bool number_with_unit(const std::string& text,
                      const std::vector<std::pair<std::string, double>>& units, double* value) {
  char* end = nullptr;
  const double v = std::strtod(text.c_str(), &end);
  if (end == text.c_str() || !std::isfinite(v)) return false;
  std::string unit(end);
  unit.erase(
      std::remove_if(unit.begin(), unit.end(), [](unsigned char c) { return std::isspace(c); }),
      unit.end());
  for (const auto& [name, factor] : units) {
    if (unit != name) continue;
    *value = v * factor;
    return true;
  }
  return false;
}

std::string to_string(ComfortBody body) {
  switch (body) {
    case ComfortBody::seated:
      return "seated";
    case ComfortBody::standing:
      return "standing";
    default:
      return "sphere";
  }
}

ComfortInput read_comfort_table(const toml::node& node, const std::string& path, bool air_solved) {
  return ComfortReader(path).read(node, air_solved);
}

}  // namespace hearthray
