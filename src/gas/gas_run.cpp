#include "hearthray/gas_run.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>

#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/gas_cache.hpp"

namespace hearthray {

namespace {

// Heat a patch takes from the furnace: radiation absorbed less emitted, plus convection.
double taken(const ZonePatchResult& r) {
  return r.convection_in - r.net_out;
}

}  // namespace

double GasRun::heat_to_load() const {
  double q = 0;
  for (std::size_t p = 0; p < patches.size(); ++p)
    if (load_patch[p]) q += taken(solve.patches[p]);
  return q;
}

double GasRun::heat_to_held_patches() const {
  double q = 0;
  for (std::size_t p = 0; p < patches.size(); ++p)
    if (patches[p].known_temperature && !load_patch[p]) q += taken(solve.patches[p]);
  return q;
}

double GasRun::heat_through_walls() const {
  double q = 0;
  for (std::size_t p = 0; p < patches.size(); ++p)
    if (!patches[p].known_temperature && !load_patch[p]) q += taken(solve.patches[p]);
  return q;
}

std::vector<ZonePatchCondition> gas_patch_conditions(const std::vector<SurfaceThermal>& surfaces,
                                                     const Scene& scene, const PatchSet& patches) {
  std::vector<double> surface_area(scene.surfaces.size(), 0.0);
  for (const Patch& p : patches.patches) surface_area[p.surface] += p.area;
  std::vector<ZonePatchCondition> out;
  for (const Patch& p : patches.patches) {
    const SurfaceThermal& s = surfaces[p.surface];
    const std::string& name = scene.surfaces[p.surface].name;
    ZonePatchCondition c;
    c.emissivity = s.emissivity;
    if (s.condition.convection) {
      // The scene file allows only the gas as the fluid here; run_gas finds the zone.
      if (!s.condition.convection->fluid_is_gas)
        throw InputError("surface " + name +
                         ": with [gas], convection exchanges with the gas: fluid = \"gas\"");
      c.convection_h = s.condition.convection->h;
    }
    switch (s.condition.kind) {
      case ConditionKind::temperature:
        c.known_temperature = true;
        c.temperature = s.condition.value;
        break;
      case ConditionKind::heat_flux:
        c.known_temperature = false;
        c.power = s.condition.value * p.area;
        break;
      case ConditionKind::power:
        c.known_temperature = false;
        c.power = s.condition.value * p.area / surface_area[p.surface];
        break;
      case ConditionKind::adiabatic:
        c.known_temperature = false;
        break;
    }
    // A wall loss matters for the balance of a surface whose temperature is solved; a surface
    // held at its temperature is fed from outside the model, loss and all.
    if (s.condition.wall_loss && !c.known_temperature) {
      c.wall_U = s.condition.wall_loss->U;
      c.outside_temperature = s.condition.wall_loss->outside_K;
    }
    if (!c.known_temperature) c.temperature = 1000;  // start value
    out.push_back(c);
  }
  return out;
}

namespace {

// Zones in flow order: by their cell's position along the axis.
std::vector<std::size_t> flow_order(const GasInput& in, const GasExchange& x) {
  std::vector<std::size_t> order(x.zone_count());
  for (std::size_t z = 0; z < order.size(); ++z) order[z] = z;
  if (in.flow == GasInput::Flow::none) return {};
  const int axis = in.flow_axis;
  std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
    const int ia = x.grid.cell_index(x.zone_cell[a])[std::size_t(axis)];
    const int ib = x.grid.cell_index(x.zone_cell[b])[std::size_t(axis)];
    return in.flow_direction > 0 ? ia < ib : ia > ib;
  });
  return order;
}

// The zone a patch's film touches: the zone of the cell that holds a point just in front of
// the patch's area-weighted centroid (on the side the patch faces), or the zone of the nearest
// cell when that cell holds no gas.
std::size_t zone_beside(const Scene& scene, const PatchSet& patches, std::size_t p,
                        const GasExchange& x) {
  Vec3 centre{0, 0, 0}, normal{0, 0, 0};
  double area = 0;
  for (std::uint32_t k = patches.triangle_offset[p]; k < patches.triangle_offset[p + 1]; ++k) {
    const std::uint32_t t = patches.triangle_index[k];
    const auto& v = scene.triangles[t].v;
    const double a = scene.triangle_area(t);
    centre =
        centre + (scene.vertices[v[0]] + scene.vertices[v[1]] + scene.vertices[v[2]]) * (a / 3.0);
    normal = normal + scene.normal(t) * a;
    area += a;
  }
  centre = centre * (1.0 / area);
  if (patches.patches[p].side == Side::back) normal = normal * -1.0;
  const Vec3 h = x.grid.cell_size();
  // A closed surface taken as one patch has no net normal: its centroid then.
  const Vec3 point = norm(normal) > 1e-12 * area
                         ? centre + normalized(normal) * (1e-3 * std::min({h.x, h.y, h.z}))
                         : centre;
  const Box3& box = x.grid.box();
  std::array<int, 3> at{};
  const double lo[3] = {box.lo.x, box.lo.y, box.lo.z}, q[3] = {point.x, point.y, point.z},
               size[3] = {h.x, h.y, h.z};
  for (int d = 0; d < 3; ++d)
    at[d] = std::clamp(int(std::floor((q[d] - lo[d]) / size[d])), 0, x.grid.cells()[d] - 1);
  std::size_t best = 0;
  double best_distance = std::numeric_limits<double>::infinity();
  for (std::size_t z = 0; z < x.zone_count(); ++z) {
    const auto c = x.grid.cell_index(x.zone_cell[z]);
    double d2 = 0;
    for (int d = 0; d < 3; ++d) d2 += std::pow((c[d] - at[d]) * size[d], 2);
    if (d2 < best_distance) best_distance = d2, best = z;
  }
  return best;
}

// The scores from the cache folder when it holds them, else traced (and stored there).
GasScores cached_scores(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                        const GasInput& input, const std::vector<double>& k,
                        const GasTraceOptions& trace, const GasRunOptions& options, GasRun& run) {
  if (options.cache_dir.empty()) {
    run.cache_note = "gas exchange areas: traced (cache not used)";
    return trace_gas_scores(scene, patches, tracer, input.cells, k, trace);
  }
  GasCacheSettings settings;
  settings.patch_specs = options.patch_specs;
  settings.rays = options.rays_for_patch;
  if (settings.rays.empty()) settings.rays.assign(patches.size(), trace.rays_per_patch);
  settings.rays_per_cell = trace.rays_per_cell;
  settings.cells = input.cells;
  settings.k = k;
  settings.seed = trace.seed;
  settings.panels = options.panels;
  const TallyCacheKey key = gas_cache_key(options.mesh_bytes, options.mesh, scene, settings);
  std::vector<std::uint64_t> rays = settings.rays;
  const std::size_t cells = std::size_t(input.cells[0]) * input.cells[1] * input.cells[2];
  rays.insert(rays.end(), cells, trace.rays_per_cell);
  CachedGasScores cached = load_cached_gas_scores(options.cache_dir, key, rays, cells, k.size());
  if (cached.status == CacheStatus::hit) {
    run.from_cache = true;
    run.cache_note = "gas exchange areas: from cache " + cached.path;
    return std::move(cached.scores);
  }
  std::string note;
  if (cached.status == CacheStatus::rejected)
    note = "gas exchange areas: ignored the cache file " + cached.path + ": " + cached.reason +
           "; traced again\n";
  GasScores scores = trace_gas_scores(scene, patches, tracer, input.cells, k, trace);
  const CacheWrite written = store_cached_gas_scores(options.cache_dir, key, scores);
  run.cache_note =
      note + (written.stored ? "gas exchange areas: traced; stored in cache " + written.path
                             : "gas exchange areas: traced; could not store them "
                               "in the cache: " +
                                   written.reason);
  return scores;
}

}  // namespace

GasRun run_gas(const GasInput& input, const Scene& scene, const PatchSet& patches,
               const Tracer& tracer, std::vector<ZonePatchCondition> conditions,
               const GasRunOptions& options) {
  GasRun run;
  run.input = input;
  run.load_patch.assign(patches.size(), false);
  for (const std::string& name : input.load) {
    const int s = scene.find_surface(name);
    if (s < 0)
      throw InputError("[gas] load names surface '" + name +
                       "', which the mesh does not have; it has " + join(scene.surface_names()));
    for (std::size_t p = 0; p < patches.size(); ++p)
      if (patches.patches[p].surface == std::uint32_t(s)) run.load_patch[p] = true;
  }
  if (input.firing) run.combustion = burn(*input.firing);
  run.gases = gas_properties(input, run.combustion ? &*run.combustion : nullptr);
  run.warnings = run.gases.warnings();

  GasTraceOptions trace;
  trace.rays_for_patch = options.rays_for_patch;
  trace.rays_per_cell = input.rays_per_cell;
  trace.seed = options.seed;
  trace.threads = options.threads;
  trace.storage = options.storage;
  trace.force = options.force;
  run.exchange = gas_exchange_from_scores(
      scene, patches, input.cells, run.gases.absorption_coefficients(),
      cached_scores(scene, patches, tracer, input, run.gases.absorption_coefficients(), trace,
                    options, run),
      trace);
  run.smoothing = smooth_gas_exchange(run.exchange);
  if (!run.smoothing.converged)
    run.warnings.push_back("gas: smoothing the exchange areas did not converge (row error " +
                           std::to_string(run.smoothing.max_row_error) + ")");
  const GasExchange& x = run.exchange;
  double lost = 0, total = 0;
  for (std::size_t i = 0; i < x.rows(); ++i)
    lost += x.lost.back()(i), total += x.row_target(x.gas_count() - 1, i);
  if (lost > 1e-4 * total)
    run.warnings.push_back("gas: " + std::to_string(100 * lost / total) +
                           " % of the radiation escapes or lands on back faces: the gas "
                           "needs a closed enclosure whose fronts face it");

  run.flow_order = flow_order(input, x);
  run.patches = std::move(conditions);
  for (std::size_t p = 0; p < patches.size(); ++p)
    if (run.patches[p].convection_h > 0)
      run.patches[p].convection_zone = int(zone_beside(scene, patches, p, x));
  ZoneSolveInput in;
  in.exchange = &x;
  in.gases = &run.gases;
  in.patches = run.patches;
  in.surroundings_temperature = options.surroundings_temperature;
  in.zones.resize(x.zone_count());
  if (input.temperature) {
    for (ZoneGasCondition& z : in.zones) z = {true, *input.temperature, 0.0};
  } else {
    const double start = run.combustion->adiabatic_flame_temperature * 0.7;
    for (ZoneGasCondition& z : in.zones) z = {false, start, 0.0};
    for (std::size_t m = 0; m < input.release.size() && m < run.flow_order.size(); ++m)
      in.zones[run.flow_order[m]].heat_release = input.release[m] * run.combustion->firing_rate;
    in.flow_order = run.flow_order;
    in.combustion = &*run.combustion;
  }
  for (std::size_t z = 0; z < x.zone_count(); ++z)
    if (!run.gases.temperature_in_range(in.zones[z].temperature) && input.temperature)
      run.warnings.push_back("gas: zone temperature outside the WSGG fit's 600..2400 K");
  run.solve = solve_zones(in);
  bool out_of_range = false;
  for (const ZoneGasResult& z : run.solve.zones)
    out_of_range = out_of_range || !run.gases.temperature_in_range(z.temperature);
  if (out_of_range && !input.temperature)
    run.warnings.push_back(
        "gas: a zone's solved temperature lies outside the WSGG fit's 600..2400 K; its "
        "weights were held at the end of the range");
  return run;
}

}  // namespace hearthray
