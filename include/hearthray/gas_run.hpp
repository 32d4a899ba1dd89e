// A scene with a [gas] table through the gas stages: the products of the firing, the gray
// gases, the zones and their exchange areas, smoothing, and the zone solve; with the figures
// a furnace designer reads (heat to the load, flue loss, efficiency, balance).
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "hearthray/cache.hpp"
#include "hearthray/combustion.hpp"
#include "hearthray/gas_input.hpp"
#include "hearthray/gas_properties.hpp"
#include "hearthray/gas_zones.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/scene_file.hpp"
#include "hearthray/tracer.hpp"
#include "hearthray/zone_solve.hpp"

namespace hearthray {

struct GasRunOptions {
  std::uint64_t seed = 1;
  std::vector<std::uint64_t> rays_for_patch;  // one per patch
  int threads = 0;
  double surroundings_temperature = 293.15;  // K
  // Exchange-area storage (dense up to 2000 rows, sparse above, unless given) and whether to
  // run past the memory estimate (GasTraceOptions).
  GasStorage storage = GasStorage::automatic;
  bool force = false;
  // The gas cache (gas_cache.hpp): scores read from and stored in cache_dir ("" = not used),
  // keyed with the mesh file's bytes and options, the panels placed on it and the surfaces'
  // patch specs.
  std::string cache_dir;
  std::string mesh_bytes;
  MeshOptions mesh;
  std::vector<PanelPlacement> panels;  // the scene file's [panel.NAME]
  std::vector<PatchSpec> patch_specs;  // per surface
};

struct GasRun {
  GasInput input;
  std::optional<Combustion> combustion;
  GrayGasSet gases;
  GasExchange exchange;
  GasSmoothingSummary smoothing;
  std::vector<std::size_t> flow_order;      // zones from the burner end to the flue
  std::vector<ZonePatchCondition> patches;  // as solved
  std::vector<bool> load_patch;             // per patch: part of the load ([gas] load)
  ZoneSolveResult solve;
  std::vector<std::string> warnings;  // gas properties out of their fit's range, ...
  // Where the exchange areas came from, for the terminal: traced, from the cache file, stored
  // in it, or why a cache file was ignored or not written (kept out of the result files, which
  // are the same whether traced or cached).
  bool from_cache = false;
  std::string cache_note;

  // Heat into the load's patches, W (0 when [gas] names no load).
  double heat_to_load() const;
  // Heat into the other patches of known temperature (openings, held walls), W.
  double heat_to_held_patches() const;
  // Heat lost through walls of unknown temperature less the power put into them, W.
  double heat_through_walls() const;
  double firing_rate() const { return combustion ? combustion->firing_rate : 0.0; }
};

// Per-patch conditions from the surfaces' thermal description: temperature, heat flux and
// power (a surface's power shared among its patches by area), adiabatic, wall loss (for
// surfaces of solved temperature; one held at its temperature is fed from outside the model).
// Convection goes to the gas (fluid = "gas"; run_gas finds each patch's zone); a fluid of
// given temperature is refused with a gas.
std::vector<ZonePatchCondition> gas_patch_conditions(const std::vector<SurfaceThermal>& surfaces,
                                                     const Scene& scene, const PatchSet& patches);

// Runs the gas stages. Throws InputError for bad input; non-convergence is in run.solve.
GasRun run_gas(const GasInput& input, const Scene& scene, const PatchSet& patches,
               const Tracer& tracer, std::vector<ZonePatchCondition> conditions,
               const GasRunOptions& options);

}  // namespace hearthray
