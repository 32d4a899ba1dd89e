// Triangulation of one OBJ polygon in its own plane. CAD exporters write polygons with
// collinear vertices (to keep edges shared with neighbouring faces free of T-junctions) and
// concave polygons (an L-shaped wall); a fan from the first vertex turns the first into
// zero-area slivers, which opens a closed mesh, and the second into triangles outside the
// polygon. Here the polygon is projected on the plane of its Newell normal and cut by ear
// clipping: an ear has a positive area and no other corner inside or on it, so every corner,
// collinear ones included, stays a triangle corner and no sliver is made.
#pragma once

#include <array>
#include <cstdint>
#include <vector>

#include "hearthray/geometry.hpp"

namespace hearthray::mesh_detail {

struct PolygonCut {
  std::vector<std::array<std::uint32_t, 3>> triangles;  // counter-clockwise about the normal
  double out_of_plane = 0;  // largest distance of a corner from the polygon's plane
  double size = 0;          // largest distance between two corners (bounding-box diagonal)
  bool clean = true;        // false: no ear was found somewhere (a self-intersecting
                            // polygon) and the rest was cut as a fan
};

// `corners`: vertex indices of the polygon in file order (front counter-clockwise).
PolygonCut triangulate_polygon(const std::vector<std::uint32_t>& corners,
                               const std::vector<Vec3>& vertices);

}  // namespace hearthray::mesh_detail
