// Scene files written into a scratch folder and loaded, and the thermal settings of the
// hot-floor / cold-roof cube used by several tests. Header-only, like cli_run.hpp.
#pragma once

#include <string>

#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/scene_file.hpp"
#include "support/cli_run.hpp"

namespace hearthray::testing {

struct LoadedScene {
  SceneFile file;
  Scene scene;
  PatchSet patches;  // one per surface side
};

// Writes `obj` as mesh.obj and a scene.toml naming it followed by `body`, then reads both.
inline LoadedScene load_scene_text(const ScratchDir& dir, const std::string& obj,
                                   const std::string& body = "") {
  write_text(dir / "mesh.obj", obj);
  write_text(dir / "scene.toml", "[mesh]\nfile = \"mesh.obj\"\n" + body);
  LoadedScene l;
  l.file = read_scene_file((dir / "scene.toml").string());
  l.scene = load_scene(l.file);
  l.patches = make_surface_patches(l.scene);
  return l;
}

// Unit cube (tests/support/meshes.hpp unit_cube_obj): floor at 1000 K (eps 0.8), roof at
// 400 K (eps 0.6), the four walls adiabatic (eps 0.5). Our own test case, no source.
inline constexpr const char* kHotFloorColdRoof = R"(
[defaults]
emissivity = 0.5
adiabatic = true
[surface.floor]
emissivity = 0.8
temperature = "1000 K"
[surface.roof]
emissivity = 0.6
temperature = "400 K"
)";

}  // namespace hearthray::testing
