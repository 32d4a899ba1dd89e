// Grid cells clipped to a planar chart that is not a rectangle (see layout.hpp): the chart's
// triangles, already cut along the grid lines, grouped by the cell their centroid lies in and
// split into the edge-connected pieces of each cell. A piece under half a cell's area (a
// sliver along an edge or a hole) joins the neighbour (sharing an edge with it) whose union
// with it is the most compact, by polar moment over area squared (a square 1/6, a 2.5 : 1
// rectangle 0.242), when that union is no less compact than kCompact or than the piece alone;
// a compact strip that would only make a long strip with any neighbour stays a patch.
#pragma once

#include <cstdint>
#include <vector>

#include "patches/layout.hpp"

namespace hearthray::patch_layout {

// Under this fraction of a whole cell's area a piece looks for a neighbour to join.
inline constexpr double kSliver = 0.5;
// Polar moment over area squared that a joined piece may reach (about a 2.5 : 1 rectangle).
inline constexpr double kCompact = 0.25;

// The piece (0, 1, ...) of each of chart.triangles, numbered in the order of their first
// triangle. Sequential and ordered by triangle index: a pure function of the mesh.
std::vector<std::uint32_t> clipped_cells(const Scene& scene, const Chart& chart,
                                         const std::vector<std::uint32_t>& weld);

}  // namespace hearthray::patch_layout
