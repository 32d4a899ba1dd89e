// Where a mesh is not fit for an enclosure, with coordinates: its gaps (boundary edges joined
// into runs) and the faces of different surfaces that lie on each other (solids exported
// touching, a block resting on the hearth, or the same face twice). `hearthray check` lists
// them and writes them as lines a viewer opens; the ray diagnostics name the contacts where
// rays end on back faces.
#pragma once

#include <array>
#include <cstdint>
#include <string>
#include <vector>

#include "hearthray/geometry.hpp"
#include "hearthray/scene.hpp"

namespace hearthray {

// Boundary edges (one triangle; vertices welded by position, as analyse_topology does)
// joined into runs that share an end: each run is one gap or one open rim.
struct GapRun {
  std::vector<std::array<Vec3, 2>> edges;  // metres
  std::vector<std::uint32_t> surfaces;     // surfaces owning an edge of the run, ascending
  double length = 0;                       // metres
  Box3 box;                                // of the edges
};
// Runs in order of decreasing length.
std::vector<GapRun> gap_runs(const Scene& scene);

// Faces of two different surfaces lying in one plane and overlapping with a positive area,
// or cutting through each other (one solid sticking into another).
enum class ContactKind {
  touching,  // in one plane, fronts facing away from each other: two solids exported
             // touching (a block on a hearth)
  doubled,   // in one plane, fronts the same way: the same face given twice
  crossing   // faces cutting through each other along a line: solids that interpenetrate
};
struct FaceContact {
  std::uint32_t surface_a = 0, surface_b = 0;  // surface_a < surface_b
  ContactKind kind = ContactKind::touching;
  double area = 0;    // m^2 of overlap (touching, doubled)
  double length = 0;  // m of the line where the faces cross (crossing)
  Vec3 centre;        // centre of the overlap or of the line, weighted by area or length
  Box3 box;           // of the overlap or line
  std::vector<std::array<Vec3, 3>> pieces;  // the overlap cut into triangles (first 1000)
  std::vector<std::array<Vec3, 2>> lines;   // the line of a crossing (first 1000 pieces)
};
// Contacts by pair of surfaces and kind: overlaps first, largest area first, then crossings,
// longest first. `relative_tolerance`: distance
// from the plane and overlap, as a share of the scene's bounding-box diagonal.
std::vector<FaceContact> face_contacts(const Scene& scene, double relative_tolerance = 1e-6);

// "'hearth' and 'block' touch face to face over 0.28 m^2 around (1.5, 0.5, 0) m: ..." with
// what to do, for messages.
std::string contact_sentence(const Scene& scene, const FaceContact& contact);
// "3 edge(s), 1.5 m long, from (0, 0, 1) m to (1.5, 0, 1) m, edges of 'roof', 'wall'".
std::string gap_sentence(const Scene& scene, const GapRun& gap);
// "(1.5, 0.5, 0) m": four significant digits, below a micrometre written as 0.
std::string point_text(const Vec3& p);

}  // namespace hearthray
