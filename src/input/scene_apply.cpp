// What the scene file says about a loaded scene: surfaces it names, how each is cut into
// patches, the ray budget, and each surface's thermal description (surface over [defaults]).
#include "hearthray/error.hpp"
#include "hearthray/scene_file.hpp"

namespace hearthray {
namespace {

// "scene.toml:12: " for messages about a table of the file ("" for a bare mesh).
std::string where(const SceneFile& file, int line) {
  if (file.path.empty()) return "";
  return file.path + (line > 0 ? ":" + std::to_string(line) : std::string()) + ": ";
}

}  // namespace

Scene load_scene(const SceneFile& file) {
  Scene scene = load_obj(file.mesh_path, file.mesh);
  if (!file.panels.empty()) place_panels(&scene, file.panels);
  for (const auto& [name, spec] : file.surfaces) {
    const int index = scene.find_surface(name);
    if (index < 0) {
      const char* from =
          file.mesh.surfaces_from == SurfacesFrom::groups ? "groups/objects" : "materials";
      throw InputError(where(file, spec.line) + "[surface." + name +
                       "] names a surface that is "
                       "not in the mesh '" +
                       file.mesh_path + "'; its surfaces (from " + from + ") are: " + [&] {
                         std::string list;
                         for (const std::string& n : scene.surface_names()) {
                           list += (list.empty() ? "" : ", ") + n;
                         }
                         return list;
                       }());
    }
    scene.surfaces[static_cast<std::size_t>(index)].two_sided = spec.two_sided;
  }
  return scene;
}

std::vector<PatchSpec> patch_specs(const SceneFile& file, const Scene& scene) {
  std::vector<PatchSpec> specs;
  specs.reserve(scene.surfaces.size());
  for (const Surface& surface : scene.surfaces) {
    const SurfaceSpec* spec = file.find(surface.name);
    if (spec && spec->patches)
      specs.push_back(*spec->patches);
    else
      specs.push_back(file.defaults.patches.value_or(PatchSpec{}));
  }
  return specs;
}

RayBudget ray_budget(const SceneFile& file) {
  RayBudget budget;
  if (file.rays_per_patch) budget.per_patch = *file.rays_per_patch;
  if (file.rays_total) budget.total = *file.rays_total;
  if (file.rays_min_per_patch) budget.min_per_patch = *file.rays_min_per_patch;
  return budget;
}

std::vector<SurfaceThermal> resolve_thermal(const SceneFile& file, const Scene& scene) {
  std::vector<SurfaceThermal> out;
  out.reserve(scene.surfaces.size());
  const SurfaceSpec none;
  for (const Surface& surface : scene.surfaces) {
    const SurfaceSpec* found = file.find(surface.name);
    const SurfaceSpec& spec = found ? *found : none;
    const SurfaceSpec& def = file.defaults;
    const std::string at = where(file, spec.line);
    const std::string table = "[surface." + surface.name + "]";
    SurfaceThermal thermal;

    const std::optional<double> emissivity = spec.emissivity ? spec.emissivity : def.emissivity;
    if (!emissivity) {
      throw InputError(at + "surface '" + surface.name +
                       "' has no emissivity: give emissivity "
                       "= 0.85 (say) in " +
                       table + ", or one for every surface in [defaults]");
    }
    thermal.emissivity = *emissivity;

    const SurfaceSpec& with_condition = spec.kind ? spec : def;
    if (!with_condition.kind) {
      throw InputError(at + "surface '" + surface.name +
                       "' has no condition: give one of "
                       "temperature, heat_flux, power or adiabatic = true in " +
                       table + ", or one for every surface in [defaults]");
    }
    thermal.condition.kind = *with_condition.kind;
    thermal.condition.value = with_condition.value;
    thermal.condition.convection = spec.convection ? spec.convection : def.convection;
    if (spec.no_convection) thermal.condition.convection.reset();

    const bool two_sided = surface.two_sided || spec.two_sided;
    if (spec.wall_loss && two_sided) {
      throw InputError(at + "surface '" + surface.name +
                       "' is two-sided and has a wall loss: a "
                       "thin two-sided sheet has no outside; remove 'wall' from " +
                       table + " or make the surface one-sided");
    }
    // A wall loss in [defaults] applies to the one-sided surfaces only, for the same reason.
    if (!two_sided && !spec.no_wall)
      thermal.condition.wall_loss = spec.wall_loss ? spec.wall_loss : def.wall_loss;
    out.push_back(std::move(thermal));
  }
  return out;
}

ThermalInput thermal_input(const SceneFile& file, const Scene& scene) {
  if (!file.has_thermal_input()) {
    throw InputError(
        file.path.empty()
            ? "'" + file.mesh_path +
                  "' is a mesh: a solve needs a scene file (.toml) that gives every surface an "
                  "emissivity and a condition (temperature, heat_flux, power or adiabatic = "
                  "true), per surface in [surface.NAME] or for all in [defaults]"
            : file.path +
                  ": no surface has an emissivity or a condition: give them per surface in "
                  "[surface.NAME] (emissivity = 0.85, temperature = \"1250 C\") or for all in "
                  "[defaults]");
  }
  ThermalInput input;
  input.surfaces = resolve_thermal(file, scene);
  input.surroundings_K = file.surroundings_K;
  input.source = file.path.empty() ? file.mesh_path : file.path;
  return input;
}

}  // namespace hearthray
