// Private to the input stage: what the readers of the scene file's sub-tables ([gas],
// [firing]) share: errors naming file and line, unknown keys refused, strings and quantities
// with units.
#pragma once

#include <toml++/toml.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdlib>
#include <initializer_list>
#include <map>
#include <string>

#include "hearthray/error.hpp"
#include "hearthray/scene_file.hpp"

namespace hearthray::input {

// Units a quantity may be written in, with their factor to SI (or to atm, %, ...).
using Units = std::map<std::string, double>;

class TomlReader {
 public:
  explicit TomlReader(std::string path) : path_(std::move(path)) {}

  [[noreturn]] void fail(const toml::node& node, const std::string& message) const {
    throw InputError(path_ + ":" + std::to_string(node.source().begin.line) + ": " + message);
  }

  // Every key of `t` must be one of `allowed`.
  void only(const toml::table& t, std::initializer_list<const char*> allowed,
            const std::string& where) const {
    for (auto&& [key, node] : t) {
      const std::string k(key.str());
      if (std::any_of(allowed.begin(), allowed.end(), [&](const char* a) { return k == a; }))
        continue;
      std::string list;
      for (const char* a : allowed) list += std::string(list.empty() ? "" : ", ") + a;
      fail(node, "unknown key '" + k + "' in " + where + "; expected one of " + list);
    }
  }

  std::string string(const toml::node& node, const std::string& key, const std::string& where,
                     const std::string& example) const {
    if (const auto* s = node.as_string()) return s->get();
    fail(node, key + " in " + where + " must be a string, like " + key + " = \"" + example + "\"");
  }

  // "0.3 1/m": a number and one of `units` (spaces ignored).
  double quantity(const toml::node& node, const std::string& key, const std::string& where,
                  const Units& units, const std::string& example) const {
    const std::string s = string(node, key, where, example);
    char* end = nullptr;
    const double v = std::strtod(s.c_str(), &end);
    std::string unit(end == s.c_str() ? s : std::string(end));
    unit.erase(
        std::remove_if(unit.begin(), unit.end(), [](unsigned char ch) { return std::isspace(ch); }),
        unit.end());
    const auto it = units.find(unit);
    if (end == s.c_str() || it == units.end() || !std::isfinite(v)) {
      std::string names;
      for (const auto& [name, factor] : units) names += (names.empty() ? "" : ", ") + name;
      fail(node, key + " in " + where + " is \"" + s + "\"; write it with a unit (" + names +
                     "), like " + key + " = \"" + example + "\"");
    }
    return v * it->second;
  }

  // A quantity of the scene file's kinds (temperature, power, length, ...), errors at its line.
  double scene_quantity(const toml::node& node, const std::string& key, const std::string& where,
                        Quantity q, const std::string& example) const {
    try {
      return parse_quantity(q, string(node, key, where, example), key);
    } catch (const InputError& e) {
      fail(node, "in " + where + ", " + e.what());
    }
  }
  double temperature(const toml::node& node, const std::string& key,
                     const std::string& where) const {
    return scene_quantity(node, key, where, Quantity::temperature, "1250 C");
  }

 protected:
  std::string path_;
};

}  // namespace hearthray::input
