// How a surface cut into patches of a given size is laid out. The surface falls into charts:
// edge-connected pieces whose neighbouring triangles bend by less than 40 degrees. Each chart
// is laid out by its shape:
//  - rectangle: a planar chart that fills its bounding rectangle (taken along its longest
//    run of parallel boundary edges): a grid of nu x nv equal cells aligned with its edges,
//    nu = round(length / size), nv = round(width / size); `subdivide` cuts the triangles along
//    the grid lines, so every cell is exactly a rectangle;
//  - clipped: any other planar chart (a wall with a door or window cut out, an L, a disc): the
//    same grid over its bounding rectangle, taken the same way, cut along the grid lines; each
//    cell's part of the chart (each edge-connected part, where a hole splits a cell) is a
//    patch, and one under half a cell's area joins the neighbour that makes the most compact
//    patch with it, unless all would make a long strip (clipped.hpp);
//  - cylinder: a curved chart whose normals are all perpendicular to one axis and whose facets
//    are tangent to one circle about it (within 2 % of its radius): bands of equal height along
//    the axis (cut by `subdivide` along planes across the axis) and sectors around it, whole
//    facets going to the sector their normal points into, so sector edges follow facet edges;
//    the sector count is the divisor of the facet count nearest the size's (within 1.5 times),
//    so sectors are equal;
//  - regions: any other chart (curved, not a cylinder): round(area / size^2)
//    compact regions grown over its triangles from seeds spread by farthest-point sampling and
//    moved to their regions' centres (Lloyd's iteration on the triangle graph); `subdivide`
//    first splits its triangles to half the size;
//  - small: a chart under a quarter of a patch's area stays whole and joins the piece of a
//    larger chart of its surface it shares the longest edge with (a post's cap, the band it
//    closes); one touching no larger chart shares a cell of a grid of the patch size with the
//    other such charts of its surface (patches.cpp).
// The layout depends only on what cutting leaves unchanged (triangle normals, areas, extents,
// the boundary's directions), so the layout of the cut mesh is the layout the cuts came from.
// Everything here is sequential and ordered by triangle index: the same mesh gives the same
// patches on any machine and thread count.
#pragma once

#include <algorithm>
#include <cstdint>
#include <numeric>
#include <utility>
#include <vector>

#include "hearthray/scene.hpp"

namespace hearthray::patch_layout {

enum class ChartKind { rectangle, clipped, cylinder, regions, small };

struct Chart {
  ChartKind kind = ChartKind::regions;
  std::vector<std::uint32_t> triangles;  // scene triangle indices, increasing
  double area = 0;                       // m^2
  double extent = 0;                     // bounding-box diagonal of its vertices (m)
  Vec3 centroid;                         // area-weighted
  // rectangle and clipped: cell (i, j) spans u0 + [i, i + 1) du along u and v0 + [j, j + 1) dv
  // along v
  Vec3 u, v;
  double u0 = 0, v0 = 0, du = 0, dv = 0;
  int nu = 1, nv = 1;
  // cylinder: band b spans t0 + [b, b + 1) band along `axis`; sector s holds the triangles
  // whose normal's angle (from e1 towards e2) lies in theta0 + [s, s + 1) sector
  Vec3 axis, e1, e2;
  double t0 = 0, band = 0, theta0 = 0, sector = 0;
  int bands = 1, sectors = 1;
  // regions
  int regions = 1;
};

// Disjoint sets of 0 .. n - 1; unite keeps the lower root.
struct UnionFind {
  std::vector<std::uint32_t> parent;
  explicit UnionFind(std::size_t n) : parent(n) { std::iota(parent.begin(), parent.end(), 0u); }
  std::uint32_t find(std::uint32_t a) {
    while (parent[a] != a) a = parent[a] = parent[parent[a]];
    return a;
  }
  void unite(std::uint32_t a, std::uint32_t b) {
    a = find(a), b = find(b);
    if (a != b) parent[std::max(a, b)] = std::min(a, b);
  }
};

// Weld ids (vertices at exactly the same position share one) and the key of a welded edge.
std::vector<std::uint32_t> weld_ids(const std::vector<Vec3>& vertices);
std::uint64_t edge_key(std::uint32_t a, std::uint32_t b);

// The welded edges of `triangles`, sorted: (edge key, 3 p + k) for edge k of triangles[p], so
// the uses of one edge are a run, in the order of the triangles (a sort rather than a hash map
// of lists: cutting surfaces of 100k triangles spent most of its time in such maps).
std::vector<std::pair<std::uint64_t, std::uint32_t>> sorted_edges(
    const Scene& scene, const std::vector<std::uint32_t>& triangles,
    const std::vector<std::uint32_t>& weld);

// Calls f(first, last) for each run [first, last) of uses of one edge in `edges` (sorted_edges).
template <class F>
void for_each_edge(const std::vector<std::pair<std::uint64_t, std::uint32_t>>& edges, F f) {
  for (std::size_t i = 0; i < edges.size();) {
    std::size_t j = i + 1;
    while (j < edges.size() && edges[j].first == edges[i].first) ++j;
    f(i, j);
    i = j;
  }
}

// The charts of surface `surface` for patches of `size` metres, ordered by first triangle.
std::vector<Chart> lay_out(const Scene& scene, std::uint32_t surface, double size,
                           const std::vector<std::uint32_t>& weld);

// A plane {x : dot(normal, x) = offset}; vertices within `tolerance` of it count as on it.
struct CutPlane {
  Vec3 normal;
  double offset = 0;
  double tolerance = 0;
};
// The planes along which the triangles of a rectangle, clipped or cylinder chart are cut (grid
// lines, band boundaries); none for other charts.
std::vector<CutPlane> cut_planes(const Chart& chart);

// The piece (0, 1, ...) of each of the chart's triangles, in the order of chart.triangles.
// Rectangle: j nu + i; clipped: the clipped cell, slivers joined; cylinder: b sectors + s;
// regions: the region; small: 0.
std::vector<std::uint32_t> pieces(const Scene& scene, const Chart& chart,
                                  const std::vector<std::uint32_t>& weld);

}  // namespace hearthray::patch_layout
