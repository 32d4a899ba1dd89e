// Which surfaces took which [defaults] (scene_file.hpp): a default that reaches a surface
// unseen (a wall loss on the load, say) is named with the surfaces it reached.
#include <cmath>

#include "core/text.hpp"
#include "hearthray/scene_file.hpp"
#include "hearthray/units.hpp"

namespace hearthray {
namespace {

std::string celsius(double kelvin) {
  return rounded("%.4g C", kelvin - kZeroCelsius);
}

// The fluid of a convection film as the scene gave it: a temperature, or the solved gas zone
// or room air (whose fluid_K is not an input).
std::string fluid_text(const Convection& c) {
  if (c.fluid_is_gas) return "the gas zone beside it";
  if (c.fluid_is_room_air) return "the room air";
  return celsius(c.fluid_K);
}

std::string condition_text(const SurfaceSpec& d) {
  switch (*d.kind) {
    case ConditionKind::temperature:
      return "temperature = " + celsius(d.value);
    case ConditionKind::heat_flux:
      return "heat_flux = " + rounded("%.4g W/m2", d.value);
    case ConditionKind::power:
      return "power = " + rounded("%.4g W", d.value);
    case ConditionKind::adiabatic:
      break;
  }
  return "adiabatic = true";
}

// "[defaults] WHAT: taken by a, b (2 of 5 surfaces)[; switched off in c]", or "taken by none of
// the 5 surfaces" when every surface has its own.
std::string taken_line(const std::string& what, const std::vector<std::string>& takers,
                       const std::vector<std::string>& off, const std::string& off_key,
                       std::size_t surfaces) {
  std::string line = "[defaults] " + what + ": taken by ";
  if (takers.empty()) {
    line += "none of the " + std::to_string(surfaces) + " surfaces";
  } else {
    line += join_at_most(takers, 12) + " (" + std::to_string(takers.size()) + " of " +
            std::to_string(surfaces) + " surfaces)";
  }
  if (!off.empty()) line += "; switched off by " + off_key + " in " + join_at_most(off, 12);
  return line;
}

}  // namespace

std::vector<std::string> defaults_taken(const SceneFile& file, const Scene& scene) {
  const SurfaceSpec& def = file.defaults;
  const SurfaceSpec none;
  std::vector<std::string> e, cond, conv, conv_off, wall, wall_off, patches, back;
  for (const Surface& surface : scene.surfaces) {
    const SurfaceSpec* found = file.find(surface.name);
    const SurfaceSpec& spec = found ? *found : none;
    const std::string& n = surface.name;
    if (def.emissivity && !spec.emissivity) e.push_back(n);
    if (def.kind && !spec.kind) cond.push_back(n);
    if (def.convection && !spec.convection) (spec.no_convection ? conv_off : conv).push_back(n);
    const bool two_sided = surface.two_sided || spec.two_sided;
    if (def.wall_loss && !spec.wall_loss && !two_sided)
      (spec.no_wall ? wall_off : wall).push_back(n);
    if (def.patches && !spec.patches) patches.push_back(n);
    if (def.expect_back_hits && !spec.expect_back_hits) back.push_back(n);
  }
  const std::size_t all = scene.surfaces.size();
  std::vector<std::string> lines;
  if (def.emissivity)
    lines.push_back(taken_line("emissivity = " + rounded("%.4g", *def.emissivity), e, {}, "", all));
  if (def.kind) lines.push_back(taken_line(condition_text(def), cond, {}, "", all));
  if (def.convection)
    lines.push_back(taken_line("convection (h = " + rounded("%.4g W/m2K", def.convection->h) +
                                   ", fluid " + fluid_text(*def.convection) + ")",
                               conv, conv_off, "convection = false", all));
  if (def.wall_loss)
    lines.push_back(taken_line("wall (U = " + rounded("%.4g W/m2K", def.wall_loss->U) +
                                   ", outside " + celsius(def.wall_loss->outside_K) +
                                   "; two-sided sheets take none)",
                               wall, wall_off, "wall = false", all));
  if (def.patches) lines.push_back(taken_line("patches", patches, {}, "", all));
  if (def.expect_back_hits)
    lines.push_back(taken_line("expect_back_hits = true", back, {}, "", all));
  return lines;
}

}  // namespace hearthray
