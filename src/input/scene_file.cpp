// The TOML scene file (toml++ 3.3). Every key is checked: an unknown or misspelled key is an
// error naming the key, its table and line, never a silent default (a misspelled emissivity
// would otherwise quietly fall back to [defaults]).
#include "hearthray/scene_file.hpp"

#include <toml++/toml.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <sstream>

#include "comfort/comfort_input_toml.hpp"
#include "core/files.hpp"
#include "core/text.hpp"
#include "gas/gas_input_toml.hpp"
#include "hearthray/error.hpp"
#include "hearthray/units.hpp"
#include "input/scene_panels_toml.hpp"
#include "input/toml_text.hpp"
#include "transient/firing_input_toml.hpp"

namespace hearthray {
namespace {

using input::edit_distance;
using input::number_text;
using input::type_name;

namespace fs = std::filesystem;

const std::vector<std::string> kTopKeys = {"mesh",    "rays",   "surroundings", "defaults",
                                           "surface", "panel",  "panel_group",  "comfort",
                                           "gas",     "firing", "room_air"};
const std::vector<std::string> kMeshKeys = {"file", "unit", "surfaces_from"};
const std::vector<std::string> kRaysKeys = {"per_patch",     "total",     "min_per_patch",
                                            "seed",          "sampler",   "target_error",
                                            "max_per_patch", "time_limit"};
const std::vector<std::string> kSurroundingsKeys = {"temperature"};
const std::vector<std::string> kSurfaceKeys = {
    "two_sided", "emissivity", "temperature", "heat_flux", "power",
    "adiabatic", "convection", "wall",        "patches",   "expect_back_hits"};
const std::vector<std::string> kConvectionKeys = {"h", "fluid"};
const std::vector<std::string> kWallKeys = {"U", "outside", "thickness", "conductivity"};

// Reads one scene file, carrying its name for messages.
class Reader {
 public:
  explicit Reader(std::string path) : path_(std::move(path)) {}

  [[noreturn]] void fail(const toml::source_region& where, const std::string& message) const {
    throw InputError(path_ + ":" + std::to_string(where.begin.line) + ": " + message);
  }

  // Every key of `table` must be in `allowed`.
  void check_keys(const toml::table& table, const std::vector<std::string>& allowed,
                  const std::string& table_name, const std::string& extra = "") const {
    for (auto&& [key, node] : table) {
      const std::string k(key.str());
      if (std::find(allowed.begin(), allowed.end(), k) != allowed.end()) continue;
      // The nearest allowed key within two edits (the first of equally near ones).
      std::string hint;
      std::size_t best = 3;
      for (const std::string& a : allowed) {
        const std::size_t d = std::size_t(edit_distance(k, a));
        if (d < best) best = d, hint = " (did you mean '" + a + "'?)";
      }
      const auto& src = key.source().begin.line > 0 ? key.source() : node.source();
      fail(src, "unknown key '" + k + "' in " + table_name + hint + "; expected one of " +
                    join(allowed) + extra);
    }
  }

  const toml::table& need_table(const toml::node& node, const std::string& name) const {
    if (const toml::table* t = node.as_table()) return *t;
    fail(node.source(), name + " must be a table, not " + type_name(node));
  }

  std::string need_string(const toml::node& node, const std::string& key,
                          const std::string& table_name, const std::string& example) const {
    if (const auto* s = node.as_string()) return s->get();
    fail(node.source(), key + " in " + table_name + " must be a string, not " + type_name(node) +
                            ": write " + key + " = " + example);
  }

  // A quantity with its unit: a string, or an error that says what to write.
  double quantity(const toml::node& node, const std::string& key, const std::string& table_name,
                  Quantity kind, const char* unit_example) const {
    if (node.is_number()) {
      fail(node.source(), "in " + table_name + ", " + key + " = " + number_text(node) +
                              " has no unit: " + unit_advice(kind, number_text(node), key));
    }
    if (!node.is_string()) {
      fail(node.source(), key + " in " + table_name + " must be a string with a unit, like " + key +
                              " = \"" + unit_example + "\", not " + type_name(node));
    }
    try {
      return parse_quantity(kind, node.as_string()->get(), key);
    } catch (const InputError& e) {
      fail(node.source(), "in " + table_name + ", " + e.what());
    }
  }

  std::uint64_t whole_number(const toml::node& node, const std::string& key, bool positive,
                             const std::string& example) const {
    const auto* i = node.as_integer();
    if (!i || i->get() < (positive ? 1 : 0)) {
      fail(node.source(), key + " in [rays] must be a " +
                              std::string(positive ? "positive" : "non-negative") +
                              " whole number, like " + key + " = " + example + "; got " +
                              (i ? std::to_string(i->get()) : type_name(node)));
    }
    return static_cast<std::uint64_t>(i->get());
  }

  // [rays] target_error, with max_per_patch and time_limit (which need it).
  void read_target(const toml::table& rays, SceneFile* file) const {
    if (const toml::node* n = rays.get("target_error")) {
      std::string text;
      if (const auto* f = n->as_floating_point())
        text = shortest(f->get());
      else if (const auto* i = n->as_integer())
        text = std::to_string(i->get());
      else if (const auto* str = n->as_string())
        text = str->get();
      else
        fail(n->source(),
             "target_error in [rays] must be a number, like target_error = 0.001, or a "
             "percentage, like target_error = \"0.5 %\"; got " +
                 type_name(*n));
      try {
        const TargetError target = parse_target_error(text, "target_error in [rays]");
        file->target_error = target.value;
        file->target_on_heat_flows = target.heat_flows;
      } catch (const InputError& e) {
        fail(n->source(), e.what());
      }
      if (file->rays_total)
        fail(n->source(),
             "[rays] gives both total and target_error: give one (target_error "
             "traces rounds of rays per patch until the error is reached; per_patch "
             "then sets the first round)");
    }
    for (const char* key : {"max_per_patch", "time_limit"}) {
      const toml::node* n = rays.get(key);
      if (n && !file->target_error)
        fail(n->source(), std::string(key) +
                              " in [rays] limits the rounds of target_error = "
                              "...; give target_error too");
    }
    if (const toml::node* n = rays.get("max_per_patch"))
      file->target_max_per_patch = whole_number(*n, "max_per_patch", true, "4_000_000");
    if (const toml::node* n = rays.get("time_limit")) {
      const std::string text = need_string(*n, "time_limit", "[rays]", "\"10 min\"");
      try {
        file->target_time_limit_s = parse_time_limit(text, "time_limit in [rays]");
      } catch (const InputError& e) {
        fail(n->source(), e.what());
      }
    }
  }

  Convection convection(const toml::node& node, const std::string& table_name) const {
    const std::string name = "'convection' of " + table_name;
    const toml::table& t = need_table(node, name);
    check_keys(t, kConvectionKeys, name, " (convection = { h = \"8 W/m2K\", fluid = \"20 C\" })");
    const toml::node* h = t.get("h");
    const toml::node* fluid = t.get("fluid");
    if (!h || !fluid) {
      fail(node.source(), name +
                              " needs both h and fluid: convection = { h = \"8 W/m2K\", "
                              "fluid = \"20 C\" }");
    }
    Convection c;
    c.h = quantity(*h, "h", name, Quantity::heat_transfer_coefficient, "8 W/m2K");
    // fluid = "gas": the radiating gas beside the surface ([gas] scenes; checked in read()).
    // fluid = "room_air": the room air, its temperature solved ([room_air]; checked in read()).
    const auto* word = fluid->as_string();
    if (word && word->get() == "gas")
      c.fluid_is_gas = true;
    else if (word && word->get() == "room_air")
      c.fluid_is_room_air = true, c.fluid_K = kZeroCelsius + 20;  // until the air is solved
    else
      c.fluid_K = quantity(*fluid, "fluid", name, Quantity::temperature, "20 C");
    return c;
  }

  WallLoss wall(const toml::node& node, const std::string& table_name) const {
    const std::string name = "'wall' of " + table_name;
    const char* forms =
        "wall = { U = \"0.9 W/m2K\", outside = \"20 C\" } or wall = { thickness = \"230 mm\", "
        "conductivity = \"0.3 W/mK\", outside = \"20 C\" }";
    const toml::table& t = need_table(node, name);
    check_keys(t, kWallKeys, name, std::string(" (") + forms + ")");
    const toml::node* U = t.get("U");
    const toml::node* outside = t.get("outside");
    const toml::node* thickness = t.get("thickness");
    const toml::node* conductivity = t.get("conductivity");
    const bool by_u = U && !thickness && !conductivity;
    const bool by_layer = !U && thickness && conductivity;
    if (!outside || !(by_u || by_layer)) {
      fail(node.source(), name + " must be " + forms);
    }
    WallLoss w;
    w.outside_K = quantity(*outside, "outside", name, Quantity::temperature, "20 C");
    if (by_u) {
      w.U = quantity(*U, "U", name, Quantity::heat_transfer_coefficient, "0.9 W/m2K");
    } else {
      const double d = quantity(*thickness, "thickness", name, Quantity::length, "230 mm");
      if (!(d > 0)) fail(thickness->source(), "thickness in " + name + " must be positive");
      const double k =
          quantity(*conductivity, "conductivity", name, Quantity::conductivity, "0.3 W/mK");
      w.U = k / d;  // plain wall: U = k / thickness
    }
    return w;
  }

  // patches = "whole" | "triangles" | a length such as "0.25 m".
  PatchSpec patch_spec(const toml::node& node, const std::string& table_name) const {
    const char* forms =
        "patches = \"0.25 m\" (pieces of about that size), \"triangles\" (one "
        "per mesh triangle) or \"whole\"";
    if (!node.is_string())
      fail(node.source(), std::string("patches in ") + table_name + " must be a string: " + forms);
    const std::string text = node.as_string()->get();
    if (text == "whole") return {};
    if (text == "triangles") return {PatchSpec::Mode::per_triangle, 0};
    double size = 0;
    try {
      size = parse_length(text, "patches");
    } catch (const InputError&) {
      fail(node.source(), "patches in " + table_name + " is '" + text + "'; write " + forms);
    }
    if (!(size > 0)) fail(node.source(), "patches in " + table_name + " must be a positive length");
    return {PatchSpec::Mode::size, size};
  }

  // `key = false` in a surface's table: no convection or wall loss there, whatever
  // [defaults] says. Anything else but a table is an error.
  bool switched_off(const toml::node& node, const std::string& key, const std::string& table_name,
                    bool in_surface) const {
    const auto* b = node.as_boolean();
    if (!b) return false;
    if (b->get() || !in_surface) {
      fail(node.source(), key + " = " + (b->get() ? "true" : "false") + " in " + table_name +
                              " means nothing: " +
                              (in_surface ? "give " + key + " = { ... }, or " + key +
                                                " = false to take none from [defaults]"
                                          : "leave " + key + " out of [defaults] to give none"));
    }
    return true;
  }

  SurfaceSpec surface(const toml::table& t, const std::string& table_name,
                      bool allow_two_sided) const {
    SurfaceSpec spec;
    spec.line = static_cast<int>(t.source().begin.line);
    check_keys(
        t,
        allow_two_sided ? kSurfaceKeys
                        : std::vector<std::string>(kSurfaceKeys.begin() + 1, kSurfaceKeys.end()),
        table_name, allow_two_sided ? "" : " (two_sided is set per surface, not in [defaults])");
    std::string condition_key;
    auto set_condition = [&](const toml::node& node, const std::string& key, ConditionKind kind,
                             double value) {
      if (!condition_key.empty()) {
        fail(node.source(), table_name + " gives both '" + condition_key + "' and '" + key +
                                "'; a surface takes at most one of temperature, heat_flux, "
                                "power or adiabatic = true");
      }
      condition_key = key;
      spec.kind = kind;
      spec.value = value;
    };
    // Keys in a fixed order so that a two-condition message is the same for any key order.
    for (const std::string& key : kSurfaceKeys) {
      const toml::node* node = t.get(key);
      if (!node) continue;
      if (key == "two_sided") {
        const auto* b = node->as_boolean();
        if (!b) {
          fail(node->source(),
               "two_sided in " + table_name + " must be true or false, not " + type_name(*node));
        }
        spec.two_sided = b->get();
      } else if (key == "emissivity") {
        const std::optional<double> e = node->is_number() ? node->value<double>() : std::nullopt;
        if (!e || !(*e > 0 && *e <= 1)) {
          fail(node->source(), "emissivity in " + table_name +
                                   " must be a number in (0, 1], like emissivity = 0.85; got " +
                                   (e ? number_text(*node) : type_name(*node)));
        }
        spec.emissivity = *e;
      } else if (key == "temperature") {
        set_condition(*node, key, ConditionKind::temperature,
                      quantity(*node, key, table_name, Quantity::temperature, "1250 C"));
      } else if (key == "heat_flux") {
        set_condition(*node, key, ConditionKind::heat_flux,
                      quantity(*node, key, table_name, Quantity::heat_flux, "350 W/m2"));
      } else if (key == "power") {
        set_condition(*node, key, ConditionKind::power,
                      quantity(*node, key, table_name, Quantity::power, "1200 W"));
      } else if (key == "adiabatic") {
        const auto* b = node->as_boolean();
        if (!b || !b->get()) {
          fail(node->source(), "adiabatic in " + table_name +
                                   " can only be true (adiabatic = true); for another condition "
                                   "give temperature, heat_flux or power instead");
        }
        set_condition(*node, key, ConditionKind::adiabatic, 0.0);
      } else if (key == "convection") {
        if (switched_off(*node, key, table_name, allow_two_sided))
          spec.no_convection = true;
        else
          spec.convection = convection(*node, table_name);
      } else if (key == "wall") {
        if (switched_off(*node, key, table_name, allow_two_sided))
          spec.no_wall = true;
        else
          spec.wall_loss = wall(*node, table_name);
      } else if (key == "expect_back_hits") {
        const auto* b = node->as_boolean();
        if (!b) {
          fail(node->source(), "expect_back_hits in " + table_name +
                                   " must be true or false, not " + type_name(*node));
        }
        spec.expect_back_hits = b->get();
      } else if (key == "patches") {
        spec.patches = patch_spec(*node, table_name);
      }
    }
    return spec;
  }

  SceneFile read() const {
    std::error_code ec;
    const std::string text = read_regular_file(path_, "scene file", kMaxSceneFileBytes);
    toml::table root;
    try {
      root = toml::parse(text, path_);
    } catch (const toml::parse_error& e) {
      fail(e.source(), std::string(e.description()));
    }
    check_keys(root, kTopKeys, "the top level of the file");

    SceneFile file;
    file.path = path_;
    const toml::node* mesh_node = root.get("mesh");
    if (!mesh_node) {
      throw InputError(path_ + ": no mesh given: add a [mesh] table with file = \"kiln.obj\"");
    }
    const toml::table& mesh = need_table(*mesh_node, "[mesh]");
    check_keys(mesh, kMeshKeys, "[mesh]");
    const toml::node* file_node = mesh.get("file");
    if (!file_node) {
      fail(mesh.source(),
           "[mesh] has no file: add file = \"kiln.obj\" (relative to this file's "
           "folder)");
    }
    const std::string written = need_string(*file_node, "file", "[mesh]", "\"kiln.obj\"");
    fs::path resolved(written);
    if (resolved.is_relative()) resolved = fs::path(path_).parent_path() / resolved;
    file.mesh_path = resolved.lexically_normal().string();
    if (!fs::is_regular_file(file.mesh_path, ec)) {
      fail(file_node->source(), "mesh file '" + written + "' not found (looked for '" +
                                    file.mesh_path +
                                    "'; a relative path is taken from the "
                                    "scene file's folder)");
    }
    if (const toml::node* unit = mesh.get("unit")) {
      const std::string text = need_string(*unit, "unit", "[mesh]", "\"mm\"");
      try {
        file.mesh.unit = parse_length_unit(text);
      } catch (const InputError& e) {
        fail(unit->source(), std::string("[mesh] ") + e.what());
      }
    }
    if (const toml::node* from = mesh.get("surfaces_from")) {
      const std::string text = need_string(*from, "surfaces_from", "[mesh]", "\"groups\"");
      if (text == "groups") {
        file.mesh.surfaces_from = SurfacesFrom::groups;
      } else if (text == "materials") {
        file.mesh.surfaces_from = SurfacesFrom::materials;
      } else {
        fail(from->source(), "surfaces_from in [mesh] is '" + text +
                                 "'; write \"groups\" (OBJ g/o names) or \"materials\" (usemtl "
                                 "names)");
      }
    }

    if (const toml::node* rays_node = root.get("rays")) {
      const toml::table& rays = need_table(*rays_node, "[rays]");
      check_keys(rays, kRaysKeys, "[rays]");
      if (const toml::node* n = rays.get("per_patch")) {
        file.rays_per_patch = whole_number(*n, "per_patch", true, "200_000");
      }
      if (const toml::node* n = rays.get("seed")) file.seed = whole_number(*n, "seed", false, "1");
      if (const toml::node* n = rays.get("sampler")) {
        const std::string text = need_string(*n, "sampler", "[rays]", "\"sobol\"");
        if (text == "sobol") {
          file.sampler = EmissionSampler::sobol;
        } else if (text == "stratified") {
          file.sampler = EmissionSampler::stratified;
        } else {
          fail(n->source(), "sampler in [rays] is '" + text +
                                "'; write \"sobol\" (scrambled Sobol' points) or \"stratified\" "
                                "(plain Monte Carlo, stratified by area)");
        }
      }
      if (const toml::node* n = rays.get("total")) {
        if (file.rays_per_patch)
          fail(n->source(),
               "[rays] gives both per_patch and total: give one (total spreads a "
               "ray budget over the patches by area)");
        file.rays_total = whole_number(*n, "total", true, "50_000_000");
      }
      if (const toml::node* n = rays.get("min_per_patch")) {
        if (!file.rays_total)
          fail(n->source(),
               "min_per_patch in [rays] goes with total = ...; with per_patch every "
               "patch gets the same rays anyway");
        file.rays_min_per_patch = whole_number(*n, "min_per_patch", true, "1000");
      }
      read_target(rays, &file);
    }

    if (const toml::node* sur_node = root.get("surroundings")) {
      const toml::table& sur = need_table(*sur_node, "[surroundings]");
      check_keys(sur, kSurroundingsKeys, "[surroundings]");
      if (const toml::node* t = sur.get("temperature")) {
        file.surroundings_K =
            quantity(*t, "temperature", "[surroundings]", Quantity::temperature, "20 C");
      }
    }

    if (const toml::node* def_node = root.get("defaults")) {
      file.defaults = surface(need_table(*def_node, "[defaults]"), "[defaults]", false);
    }

    if (const toml::node* surf_node = root.get("surface")) {
      const toml::table& all = need_table(*surf_node, "[surface]");
      for (auto&& [key, node] : all) {
        const std::string name(key.str());
        const std::string table_name = "[surface." + name + "]";
        if (!node.is_table()) {
          fail(node.source(), "surface." + name + " must be a table [surface." + name +
                                  "] with keys such as emissivity = 0.85, not " + type_name(node));
        }
        file.surfaces.emplace_back(name, surface(*node.as_table(), table_name, true));
      }
      // toml++ keeps keys sorted; the file order is the order of the tables' lines.
      std::stable_sort(file.surfaces.begin(), file.surfaces.end(),
                       [](const auto& a, const auto& b) { return a.second.line < b.second.line; });
    }
    read_panels(root, &file);
    if (const toml::node* gas = root.get("gas")) file.gas = read_gas_table(*gas, path_);
    if (const toml::node* air = root.get("room_air"))
      file.room_air = read_room_air_table(*air, path_);
    check_convection_fluids(file);
    if (const toml::node* firing = root.get("firing"))
      file.firing = read_firing_table(*firing, path_);
    if (file.room_air && file.firing)
      fail(root.get("room_air")->source(),
           "[room_air] and [firing] together are not supported: a firing over time holds its "
           "films' fluid temperatures; give the air's temperature in convection instead");
    if (const toml::node* comfort = root.get("comfort")) {
      file.comfort = read_comfort_table(*comfort, path_, file.room_air.has_value());
    }
    return file;
  }

 private:
  // [panel.NAME]: placing keys (scene_panels.cpp) and surface keys, as [surface.NAME] has;
  // then [panel_group.NAME] offsets. Panels keep the file's order.
  void read_panels(const toml::table& root, SceneFile* file) const {
    struct Read {
      PanelPlacement place;
      SurfaceSpec spec;
      std::string group;
    };
    std::vector<Read> read;
    if (const toml::node* panel_node = root.get("panel")) {
      std::vector<std::string> allowed = kSurfaceKeys;
      allowed.insert(allowed.end(), input::kPanelPlaceKeys.begin(), input::kPanelPlaceKeys.end());
      for (auto&& [key, node] : need_table(*panel_node, "[panel]")) {
        const std::string name(key.str()), table_name = "[panel." + name + "]";
        const toml::table& t = need_table(node, table_name);
        check_keys(t, allowed, table_name);
        if (file->find(name))
          fail(t.source(), table_name + " and [surface." + name +
                               "] name the same surface; give the panel's keys in one of them");
        toml::table surface_keys = t;
        for (const std::string& k : input::kPanelPlaceKeys) surface_keys.erase(k);
        Read r{{}, surface(surface_keys, table_name, true), ""};
        r.spec.line = static_cast<int>(t.source().begin.line);
        r.place = input::read_panel_place(t, name, path_, &r.group);
        read.push_back(std::move(r));
      }
    }
    std::stable_sort(read.begin(), read.end(),
                     [](const Read& a, const Read& b) { return a.spec.line < b.spec.line; });
    std::vector<std::string> groups;
    for (Read& r : read) {
      file->surfaces.emplace_back(r.place.name, r.spec);
      file->panels.push_back(r.place);
      groups.push_back(r.group);
    }
    input::move_panel_groups(root.get("panel_group"), groups, &file->panels, path_);
  }

  // With a radiating gas the films exchange with the gas (fluid = "gas"); without one there is
  // no gas to name.
  void check_convection_fluids(const SceneFile& file) const {
    auto check = [&](const SurfaceSpec& spec, const std::string& table) {
      if (!spec.convection) return;
      if (spec.convection->fluid_is_gas && !file.gas)
        throw InputError(path_ + ":" + std::to_string(spec.line) + ": 'convection' of " + table +
                         " has fluid = \"gas\", but the scene has no [gas] table; give the "
                         "fluid's temperature, e.g. fluid = \"20 C\"");
      if (spec.convection->fluid_is_room_air && !file.room_air)
        throw InputError(path_ + ":" + std::to_string(spec.line) + ": 'convection' of " + table +
                         " has fluid = \"room_air\", but the scene has no [room_air] table; "
                         "add one (ventilation, outside) or give the air's temperature, e.g. "
                         "fluid = \"20 C\"");
      if (spec.convection->fluid_is_room_air && file.gas)
        throw InputError(path_ + ":" + std::to_string(spec.line) + ": 'convection' of " + table +
                         " has fluid = \"room_air\" in a scene with [gas]: write fluid = "
                         "\"gas\"");
      if (!spec.convection->fluid_is_gas && file.gas)
        throw InputError(path_ + ":" + std::to_string(spec.line) + ": 'convection' of " + table +
                         " gives a fluid temperature, but in a scene with [gas] the film "
                         "exchanges with the gas beside the surface: write fluid = \"gas\"");
    };
    check(file.defaults, "[defaults]");
    for (const auto& [name, spec] : file.surfaces) check(spec, "[surface." + name + "]");
  }

  std::string path_;
};

bool ends_with_toml(const std::string& path) {
  std::string ext = fs::path(path).extension().string();
  std::transform(ext.begin(), ext.end(), ext.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return ext == ".toml";
}

}  // namespace

const SurfaceSpec* SceneFile::find(const std::string& name) const {
  for (const auto& [n, spec] : surfaces) {
    if (n == name) return &spec;
  }
  return nullptr;
}

bool SceneFile::has_thermal_input() const {
  auto thermal = [](const SurfaceSpec& s) {
    return s.emissivity || s.kind || s.convection || s.wall_loss;
  };
  if (thermal(defaults)) return true;
  return std::any_of(surfaces.begin(), surfaces.end(),
                     [&](const auto& entry) { return thermal(entry.second); });
}

SceneFile read_scene_file(const std::string& path) {
  return Reader(path).read();
}

SceneFile scene_file_for_mesh(const std::string& mesh_path) {
  SceneFile file;
  file.mesh_path = mesh_path;
  return file;
}

SceneFile open_scene(const std::string& path) {
  return ends_with_toml(path) ? read_scene_file(path) : scene_file_for_mesh(path);
}

}  // namespace hearthray
