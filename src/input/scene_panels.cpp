// Placing keys of [panel.NAME] and the offsets of [panel_group.NAME] (scene_panels_toml.hpp).
#include <algorithm>

#include "core/text.hpp"
#include "input/scene_panels_toml.hpp"
#include "input/toml_reader.hpp"

namespace hearthray::input {
namespace {

// A coordinate or an offset: a length with its unit, which may be negative ("-0.6 m").
double signed_length(const TomlReader& r, const toml::node& item, const std::string& key,
                     const std::string& where) {
  const std::string text = r.string(item, key, where, "1.2 m");
  const std::size_t first = text.find_first_not_of(' ');
  if (first == std::string::npos || text[first] != '-')
    return r.scene_quantity(item, key, where, Quantity::length, "1.2 m");
  try {
    return -parse_length(text.substr(first + 1), key);
  } catch (const InputError& e) {
    r.fail(item, "in " + where + ", " + e.what());
  }
}

// An array of `count` lengths with units, e.g. centre = ["2.5 m", "2.0 m", "2.7 m"]; negative
// ones only where `signed_ok`.
std::vector<double> lengths(const TomlReader& r, const toml::node& node, const std::string& key,
                            const std::string& where, std::size_t count, const char* example,
                            bool signed_ok) {
  const toml::array* a = node.as_array();
  if (!a || a->size() != count)
    r.fail(node, key + " in " + where + " must be " + std::to_string(count) +
                     " lengths with units, like " + key + " = " + example);
  std::vector<double> out;
  for (const toml::node& item : *a)
    out.push_back(signed_ok ? signed_length(r, item, key, where)
                            : r.scene_quantity(item, key, where, Quantity::length, "1.2 m"));
  return out;
}

Vec3 vec3(const std::vector<double>& v) {
  return {v[0], v[1], v[2]};
}

}  // namespace

PanelPlacement read_panel_place(const toml::table& t, const std::string& name,
                                const std::string& path, std::string* group) {
  const TomlReader r(path);
  const std::string where = "[panel." + name + "]";
  PanelPlacement p;
  p.name = name;
  p.where = path + ":" + std::to_string(t.source().begin.line) + ": " + where;
  const toml::node* on = t.get("on");
  const toml::node* centre = t.get("centre");
  const toml::node* size = t.get("size");
  if (!on || !centre || !size)
    r.fail(t, where +
                  " needs on (the flat surface it is cut out of), centre and size, like "
                  "on = \"ceiling\", centre = [\"1.1 m\", \"2.0 m\", \"2.7 m\"], "
                  "size = [\"1.2 m\", \"0.9 m\"]");
  p.host = r.string(*on, "on", where, "ceiling");
  p.centre =
      vec3(lengths(r, *centre, "centre", where, 3, "[\"1.1 m\", \"2.0 m\", \"2.7 m\"]", true));
  const std::vector<double> wh =
      lengths(r, *size, "size", where, 2, "[\"1.2 m\", \"0.9 m\"]", false);
  if (!(wh[0] > 0 && wh[1] > 0))
    r.fail(*size, "size in " + where + " must be two positive lengths");
  p.length = wh[0];
  p.width = wh[1];
  if (const toml::node* along = t.get("along")) {
    const toml::array* a = along->as_array();
    bool ok = a && a->size() == 3;
    Vec3 d;
    for (std::size_t k = 0; ok && k < 3; ++k) {
      const std::optional<double> c = (*a)[k].is_number() ? (*a)[k].value<double>() : std::nullopt;
      ok = c && std::isfinite(*c);
      if (ok) (k == 0 ? d.x : k == 1 ? d.y : d.z) = *c;
    }
    if (!ok || !(norm(d) > 0))
      r.fail(*along, "along in " + where +
                         " must be a direction of three numbers, not all zero, like along = "
                         "[1, 0, 0] (the panel's length runs that way)");
    p.along = d;
  }
  if (const toml::node* g = t.get("group")) *group = r.string(*g, "group", where, "row");
  return p;
}

void move_panel_groups(const toml::node* group_tables, const std::vector<std::string>& groups,
                       std::vector<PanelPlacement>* panels, const std::string& path) {
  const TomlReader r(path);
  std::vector<std::string> moved;
  if (group_tables) {
    const toml::table* all = group_tables->as_table();
    if (!all) r.fail(*group_tables, "panel_group must be tables [panel_group.NAME]");
    for (auto&& [key, node] : *all) {
      const std::string name(key.str()), where = "[panel_group." + name + "]";
      const toml::table* t = node.as_table();
      if (!t) r.fail(node, where + " must be a table with offset = [\"0 m\", \"-1.2 m\", \"0 m\"]");
      r.only(*t, {"offset"}, where);
      const toml::node* offset = t->get("offset");
      if (!offset) r.fail(*t, where + " needs offset = [\"0 m\", \"-1.2 m\", \"0 m\"]");
      const Vec3 d =
          vec3(lengths(r, *offset, "offset", where, 3, "[\"0 m\", \"-1.2 m\", \"0 m\"]", true));
      if (std::find(groups.begin(), groups.end(), name) == groups.end())
        r.fail(*t, where + " moves no panel: no [panel.NAME] says group = \"" + name + "\"");
      for (std::size_t k = 0; k < panels->size(); ++k)
        if (groups[k] == name) (*panels)[k].centre = (*panels)[k].centre + d;
      moved.push_back(name);
    }
  }
  for (std::size_t k = 0; k < panels->size(); ++k)
    if (!groups[k].empty() && std::find(moved.begin(), moved.end(), groups[k]) == moved.end())
      throw InputError((*panels)[k].where + ": its group '" + groups[k] + "' has no [panel_group." +
                       groups[k] +
                       "] table; add one with offset = "
                       "[\"0 m\", \"0 m\", \"0 m\"], or leave group out");
}

}  // namespace hearthray::input
