// Fuzz target: the whole view-factor path (load, patches, Embree tracing, diagnostics,
// smoothing) on a fuzzed OBJ mesh with a few rays per patch. Only hearthray::InputError may
// come out. Built by -DHEARTHRAY_FUZZ=ON (scripts/fuzz), replayed on the kept inputs by the
// `fuzz-replay-factors` test.
#include <cstddef>
#include <cstdint>
#include <sstream>
#include <string>

#include "hearthray/error.hpp"
#include "hearthray/pipeline.hpp"
#include "hearthray/scene.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    std::istringstream in(text);
    const hearthray::Scene scene = hearthray::load_obj(in, "fuzz.obj");
    if (scene.triangles.size() > 2000) return 0;  // keep each run short
    hearthray::PipelineOptions options;
    options.rays_per_patch = 16;
    options.threads = 1;
    options.seed = size;
    // The last byte chooses raw or smoothed factors.
    options.smooth = size == 0 || (data[size - 1] & 1) == 0;
    (void)hearthray::run_view_factors(scene, options);
  } catch (const hearthray::InputError&) {
  }
  return 0;
}
