// Compact regions of a chart (see layout.hpp): the chart's triangles split into chart.regions
// connected regions of similar size, by region growing on the triangle graph from seeds.
#pragma once

#include <cstdint>
#include <vector>

#include "patches/layout.hpp"

namespace hearthray::patch_layout {

// The region (0 .. chart.regions - 1) of each of chart.triangles. Seeds are spread by
// farthest-point sampling over the triangle centroids (on a chart so large that this would
// take over 2e7 distances: one seed per occupied cell of a grid of the regions' size); each round
// grows all regions at once (Dijkstra from every seed over neighbouring triangles, at centroid
// distances) and moves each seed to the triangle nearest its region's area centroid, until the
// seeds stay (at most 16 rounds). Ties go to the lower index, so the result is a pure function of
// the mesh.
std::vector<std::uint32_t> grow_regions(const Scene& scene, const Chart& chart,
                                        const std::vector<std::uint32_t>& weld);

}  // namespace hearthray::patch_layout
