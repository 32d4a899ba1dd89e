// Fuzz target: the OBJ loader on a mesh held in memory, then the topology analysis. Bad input
// must end in hearthray::InputError; anything else (a crash, a sanitizer report, another
// exception) is a finding. Built by -DHEARTHRAY_FUZZ=ON (scripts/fuzz), replayed on the kept
// inputs by the `fuzz-replay-obj` test.
#include <cstddef>
#include <cstdint>
#include <sstream>
#include <string>

#include "hearthray/error.hpp"
#include "hearthray/scene.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  hearthray::MeshOptions options;
  // The last byte picks how surfaces are named, so both paths are explored.
  if (size > 0 && (data[size - 1] & 1)) options.surfaces_from = hearthray::SurfacesFrom::materials;
  try {
    std::istringstream in(text);
    const hearthray::Scene scene = hearthray::load_obj(in, "fuzz.obj", options);
    (void)hearthray::analyse_topology(scene);
  } catch (const hearthray::InputError&) {
  }
  return 0;
}
