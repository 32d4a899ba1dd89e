// Diagnostics from the ray tallies: flipped normals (back-face hits), open enclosures and
// leaks through a closed mesh. Plain sentences a user can act on; the tool prints them.
#pragma once

#include <string>
#include <vector>

#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/view_factors.hpp"
#include "hearthray/warning.hpp"

namespace hearthray {

struct SurfaceRayReport {
  std::string name;
  std::uint64_t arrivals = 0;        // rays from all emitters that reached the surface
  std::uint64_t back_face_hits = 0;  // of those, arrivals on the back of a one-sided surface
  std::uint64_t emitted = 0;         // rays emitted by the surface (all its sides)
  std::uint64_t escaped = 0;         // of those, rays that hit nothing
};

struct RayDiagnostics {
  std::vector<SurfaceRayReport> surfaces;
  std::uint64_t emitted = 0;
  std::uint64_t escaped = 0;
  std::uint64_t back_face_hits = 0;
  bool mesh_closed = false;
  std::vector<Warning> warnings;   // back_faces, leak, normals_out
  std::vector<std::string> notes;  // informative (e.g. how much leaves an open scene)
};

// Needs tallies of all emitters.
RayDiagnostics diagnose_rays(const Scene& scene, const PatchSet& patches, const Tallies& tallies,
                             const MeshTopology& topology);

}  // namespace hearthray
