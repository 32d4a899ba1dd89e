// The places `hearthray check` finds (gaps, touching or doubled faces, back-face hits) as a
// file a viewer opens over the model: OBJ (a group per item: 'l' lines for the edges of a gap,
// faces for an overlap, 'p' points for back hits) or VTK XML unstructured grid (.vtu: lines,
// triangles and vertices with cell data "kind" and "item", the item's number in check's list).
// Coordinates in metres. Written to a temporary file and renamed, so it appears whole.
#pragma once

#include <string>
#include <vector>

#include "hearthray/diagnostics.hpp"
#include "hearthray/mesh_where.hpp"

namespace hearthray {

struct WhereFindings {
  std::vector<GapRun> gaps;
  std::vector<FaceContact> contacts;
  std::vector<BackHitSpot> back_hits;
};

// kind in the VTU file: 1 gap edge, 2 faces touching (opposed fronts), 3 the same face twice,
// 4 a back-face hit, 5 the line where two faces cut through each other.
void write_where_file(const std::string& path, const Scene& scene, const WhereFindings& found);

}  // namespace hearthray
