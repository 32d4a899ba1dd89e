// The TOML scene file: which mesh, its unit, how surfaces are named, rays and seed, and per
// surface its sides and thermal conditions. Every quantity carries its unit ("1250 C",
// "1.5 kW", "350 W/m2"); unknown or misspelled keys are errors naming the key and the line.
//
//   [mesh]      file, unit (mm|cm|m|in|ft), surfaces_from (groups|materials)
//   [rays]      per_patch, or total (a budget spread by area) with min_per_patch; seed;
//               sampler; target_error (rounds to an error wanted) with max_per_patch and
//               time_limit
//   [surroundings] temperature
//   [defaults]  any surface key except two_sided, used where a surface gives none
//   [surface.NAME] two_sided, emissivity, and at most one of
//               temperature | heat_flux | power | adiabatic = true;
//               convection = { h = "8 W/m2K", fluid = "20 C" }
//               wall = { U = "0.9 W/m2K", outside = "20 C" }
//                   or { thickness = "230 mm", conductivity = "0.3 W/mK", outside = "20 C" }
//               patches = "0.25 m" (pieces of about that size) | "triangles" | "whole"
//               convection = false, wall = false: none here, whatever [defaults] says
//               expect_back_hits = true: rays mostly arriving on its back are by design
//                   (otherwise a solve refuses such a surface as flipped)
//   [panel.NAME] a rectangle cut out of a flat surface of the mesh (panels.hpp):
//               on = "ceiling", centre = ["1.1 m", "2.0 m", "2.7 m"], size = ["1.2 m", "0.9 m"],
//               along = [1, 0, 0] (optional), group = "row" (optional), and any key of
//               [surface.NAME] for the new surface
//   [panel_group.NAME] offset = ["0 m", "-1.25 m", "0 m"]: moves the panels of group NAME
//   [comfort]   air_temperature, air_speed, rays, [comfort.point.NAME], [comfort.grid]
//               (see comfort_input.hpp)
//   [room_air]  ventilation, outside, gains, volume, density, heat_capacity: the room air's
//               temperature solved from its heat balance, with fluid = "room_air" in
//               convection (see room_air.hpp)
//   [gas]       a radiating combustion gas in zones: cells, properties, temperature or flow,
//               [gas.firing] (see gas_input.hpp)
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "hearthray/comfort_input.hpp"
#include "hearthray/conditions.hpp"
#include "hearthray/firing_input.hpp"
#include "hearthray/gas_input.hpp"
#include "hearthray/panels.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/room_air.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/view_factors.hpp"  // EmissionSampler

namespace hearthray {

struct SurfaceSpec {
  bool two_sided = false;
  std::optional<double> emissivity;
  std::optional<ConditionKind> kind;  // with `value` in SI (K, W/m^2, W)
  double value = 0;
  std::optional<Convection> convection;
  std::optional<WallLoss> wall_loss;
  std::optional<PatchSpec> patches;  // how the surface is cut into patches (default: whole)
  bool no_convection = false;        // convection = false: none, whatever [defaults] says
  bool no_wall = false;              // wall = false: no wall loss, whatever [defaults] says
  bool expect_back_hits = false;     // rays arriving on its back are by design (not refused)
  int line = 0;                      // line of the table in the scene file (0 when not from a file)
};

struct SceneFile {
  std::string path;       // the scene file ("" when a bare mesh was given)
  std::string mesh_path;  // resolved relative to the scene file's folder
  MeshOptions mesh;
  std::optional<std::uint64_t> rays_per_patch;
  std::optional<std::uint64_t> seed;
  std::optional<EmissionSampler> sampler;             // [rays] sampler
  std::optional<std::uint64_t> rays_total;            // budget spread over patches by area
  std::optional<std::uint64_t> rays_min_per_patch;    // floor per patch with rays_total
  std::optional<double> target_error;                 // [rays] target_error (RayTarget)
  bool target_on_heat_flows = false;                  // target_error was a percentage
  std::optional<std::uint64_t> target_max_per_patch;  // [rays] max_per_patch, with a target
  std::optional<double> target_time_limit_s;          // [rays] time_limit, with a target
  std::optional<double> surroundings_K;
  SurfaceSpec defaults;
  std::vector<std::pair<std::string, SurfaceSpec>> surfaces;  // in file order
  // [panel.NAME], in file order (their surface keys are in `surfaces` too); load_scene cuts
  // them out of their hosts.
  std::vector<PanelPlacement> panels;
  std::optional<ComfortInput> comfort;   // [comfort]: points and air for the comfort figures
  std::optional<GasInput> gas;           // [gas]: the radiating gas filling the enclosure
  std::optional<FiringInput> firing;     // [firing]: a schedule over time (hearthray fire)
  std::optional<RoomAirInput> room_air;  // [room_air]: the air temperature solved

  const SurfaceSpec* find(const std::string& name) const;
  bool has_thermal_input() const;  // any emissivity or condition given
};

// Parses a scene file. Throws InputError (file and line named) on any problem.
SceneFile read_scene_file(const std::string& path);
// A scene file for a bare mesh: defaults everywhere.
SceneFile scene_file_for_mesh(const std::string& mesh_path);
// `path` ending in .toml is read as a scene file, anything else is taken as a mesh.
SceneFile open_scene(const std::string& path);

// Loads the mesh, cuts the panels out of their hosts (place_panels), and applies per-surface
// settings (two_sided). A surface named in the scene but absent from the mesh is an error
// listing the names that exist.
Scene load_scene(const SceneFile& file);

// Patch spec of every surface of the scene (surface spec over defaults; whole by default),
// for plan_patches (patches.hpp).
std::vector<PatchSpec> patch_specs(const SceneFile& file, const Scene& scene);

// The scene file's [rays] table as a budget (defaults where it says nothing).
RayBudget ray_budget(const SceneFile& file);

// Resolved thermal description of every surface (surface spec over defaults). Throws
// InputError naming the surface when it has no emissivity or no condition.
std::vector<SurfaceThermal> resolve_thermal(const SceneFile& file, const Scene& scene);

// Which surfaces took each key of [defaults] (and which switched a wall or convection off),
// one line per key given there, e.g. "[defaults] wall (U = 0.9 W/m2K, outside 20 C; ...):
// taken by roof, block (2 of 9 surfaces); switched off by wall = false in door". Empty
// without [defaults].
std::vector<std::string> defaults_taken(const SceneFile& file, const Scene& scene);

// The thermal input of a scene, checked before any ray is traced: throws InputError when the
// file has no thermal input at all (a bare mesh) or a surface lacks an emissivity or a
// condition (resolve_thermal).
ThermalInput thermal_input(const SceneFile& file, const Scene& scene);

// Quantities with units, as written in scene files. Each throws InputError naming `what` and
// the units it accepts when the text has no unit or the wrong one.
// Temperatures above this are refused (no solid surface is that hot; a typo or a wrong unit).
inline constexpr double kMaxTemperatureK = 10000;
double parse_temperature(const std::string& text, const std::string& what);  // C, K, F -> K
double parse_power(const std::string& text, const std::string& what);        // W, kW, MW -> W
double parse_heat_flux(const std::string& text, const std::string& what);    // W/m2, kW/m2
double parse_heat_transfer_coefficient(const std::string& text, const std::string& what);
double parse_length(const std::string& text, const std::string& what);        // mm..ft -> m
double parse_conductivity(const std::string& text, const std::string& what);  // W/mK

// The error wanted of a ray budget set by the error ([rays] target_error, --target-error):
// a plain number in (0, 0.5), the largest standard error of any view factor; or a percentage
// in (0 %, 100 %) ("0.5 %"), the largest standard error of a surface's net heat flow relative
// to that flow (see RayTarget, pipeline.hpp), returned as a fraction (0.005).
struct TargetError {
  double value = 0;
  bool heat_flows = false;  // relative on the surfaces' net heat flows
};
TargetError parse_target_error(const std::string& text, const std::string& what);
// A time limit with its unit: "90 s", "10 min", "2 h" -> seconds, above 0.
double parse_time_limit(const std::string& text, const std::string& what);

// The same by kind, for readers that handle several quantities alike.
enum class Quantity {
  temperature,
  power,
  heat_flux,
  heat_transfer_coefficient,
  length,
  conductivity
};
double parse_quantity(Quantity quantity, const std::string& text, const std::string& what);
// What to write instead of `text` when it is a number without a unit:
// 'write WHAT = "NUMBER UNIT" (units: ...)' (the quantity's example number when `text` has none).
std::string unit_advice(Quantity quantity, const std::string& text, const std::string& what);

}  // namespace hearthray
