// Fuzz target: the TOML scene reader on a fixed small mesh (a closed unit cube, one group per
// face: floor, roof, south, north, west, east), then everything decided before a ray is
// traced: surface conditions, patch plan (with its size limits), ray budget, thermal input.
// Only hearthray::InputError may come out. Built by -DHEARTHRAY_FUZZ=ON (scripts/fuzz),
// replayed on the kept inputs by the `fuzz-replay-scene` test.
#include <unistd.h>

#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <string>

#include "hearthray/error.hpp"
#include "hearthray/pipeline.hpp"
#include "hearthray/scene_file.hpp"

namespace {

const char* const kCube =
    "v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nv 0 0 1\nv 1 0 1\nv 1 1 1\nv 0 1 1\n"
    "g floor\nf 1 2 3 4\ng roof\nf 5 8 7 6\ng south\nf 1 5 6 2\ng north\nf 4 3 7 8\n"
    "g west\nf 1 4 8 5\ng east\nf 2 6 7 3\n";

// A folder of this process holding cube.obj; the scene is written beside it.
const std::filesystem::path& folder() {
  static const std::filesystem::path dir = [] {
    const auto d = std::filesystem::temp_directory_path() /
                   ("hearthray-fuzz-scene-" + std::to_string(::getpid()));
    std::filesystem::create_directories(d);
    std::ofstream(d / "cube.obj", std::ios::binary) << kCube;
    return d;
  }();
  return dir;
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string path = (folder() / "scene.toml").string();
  {
    std::ofstream out(path, std::ios::binary | std::ios::trunc);
    out.write(reinterpret_cast<const char*>(data), static_cast<std::streamsize>(size));
  }
  try {
    const hearthray::SceneFile file = hearthray::read_scene_file(path);
    const hearthray::Scene scene = hearthray::load_scene(file);
    hearthray::PipelineOptions options;
    options.threads = 1;
    (void)hearthray::plan_scene(file, scene, options);
    (void)hearthray::thermal_input(file, scene);
  } catch (const hearthray::InputError&) {
  }
  return 0;
}
