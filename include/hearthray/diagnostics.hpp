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
  bool touching = false;             // hit on its back and lying on a face of another surface
};

struct RayDiagnostics {
  std::vector<SurfaceRayReport> surfaces;
  std::uint64_t emitted = 0;
  std::uint64_t escaped = 0;
  std::uint64_t back_face_hits = 0;
  bool mesh_closed = false;
  std::vector<Warning> warnings;   // touching_faces, back_faces, leak, normals_out
  std::vector<std::string> notes;  // informative (e.g. how much leaves an open scene)
};

// Needs tallies of all emitters.
RayDiagnostics diagnose_rays(const Scene& scene, const PatchSet& patches, const Tallies& tallies,
                             const MeshTopology& topology);

// Where rays land on the back of one-sided surfaces: a sample of rays from every surface side
// (as the view factors draw them), each back-face hit kept with its place. One spot per
// surface hit on its back, most hits first.
struct BackHitSpot {
  std::uint32_t surface = 0;       // the surface hit on its back
  std::uint64_t hits = 0;          // back hits on it in the sample
  std::uint64_t arrivals = 0;      // all rays of the sample reaching it
  std::uint32_t from_surface = 0;  // the surface that sent most of those rays
  Vec3 centre;                     // mean place of the back hits on its most-hit triangle
  Box3 box;                        // of all its back hits
  std::vector<Vec3> points;        // the first back hits (at most 200), metres
};
std::vector<BackHitSpot> back_hit_spots(const Scene& scene, std::uint64_t rays_per_side,
                                        std::uint64_t seed);
// "'roof': 97.2 % of the rays reaching it, most near (1, 0.5, 1) m (all between ... and ...),
// most sent by 'hearth'".
std::string back_hit_sentence(const Scene& scene, const BackHitSpot& spot);

}  // namespace hearthray
