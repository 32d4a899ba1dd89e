// Grid cells clipped to a planar chart, slivers joined to neighbours (see clipped.hpp).
#include "patches/clipped.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <set>
#include <unordered_map>

namespace hearthray::patch_layout {

namespace {

// Area, first moments and polar moment about the origin of a plane figure, in the chart's
// (u, v) coordinates; they add up over the parts of a figure.
struct Moments {
  double area = 0, su = 0, sv = 0, polar = 0;
  Moments& operator+=(const Moments& o) {
    area += o.area, su += o.su, sv += o.sv, polar += o.polar;
    return *this;
  }
  // Polar moment about the centroid over the area squared.
  double compactness() const { return (polar - (su * su + sv * sv) / area) / (area * area); }
};

// A triangle of area A and centroid g has the polar moment A (|g|^2 + sum_i |v_i - g|^2 / 12)
// about the origin (elementary integration).
Moments triangle_moments(const Scene& scene, const Chart& chart, std::uint32_t t) {
  const Triangle& tri = scene.triangles[t];
  double u[3], v[3];
  for (int k = 0; k < 3; ++k) {
    u[k] = dot(scene.vertices[tri.v[k]], chart.u) - chart.u0;
    v[k] = dot(scene.vertices[tri.v[k]], chart.v) - chart.v0;
  }
  const double gu = (u[0] + u[1] + u[2]) / 3, gv = (v[0] + v[1] + v[2]) / 3;
  double own = 0;
  for (int k = 0; k < 3; ++k) own += (u[k] - gu) * (u[k] - gu) + (v[k] - gv) * (v[k] - gv);
  const double a = scene.triangle_area(t);
  return {a, a * gu, a * gv, a * (gu * gu + gv * gv + own / 12)};
}

// Cell of x on a row of `count` cells of `width` from 0; outside (or NaN): the nearest end.
std::uint64_t cell_of(double x, double width, int count) {
  const double i = std::floor(x / width);
  if (!(i > 0)) return 0;
  return static_cast<std::uint64_t>(std::min(i, static_cast<double>(count - 1)));
}

// Welded edges of the chart with the (chart-local) triangles using them, in triangle order.
struct Edge {
  std::vector<std::uint32_t> users;
};
std::vector<Edge> chart_edges(const Scene& scene, const Chart& chart,
                              const std::vector<std::uint32_t>& weld) {
  std::unordered_map<std::uint64_t, std::size_t> index;
  std::vector<Edge> edges;
  for (std::uint32_t k = 0; k < chart.triangles.size(); ++k) {
    const Triangle& tri = scene.triangles[chart.triangles[k]];
    for (int e = 0; e < 3; ++e) {
      const std::uint32_t a = tri.v[e], b = tri.v[(e + 1) % 3];
      const auto [it, inserted] = index.emplace(edge_key(weld[a], weld[b]), edges.size());
      if (inserted) edges.emplace_back();
      edges[it->second].users.push_back(k);
    }
  }
  return edges;
}

// The pieces: per triangle, the edge-connected part of its cell it lies in, numbered in the
// order of their first triangle.
std::vector<std::uint32_t> cell_pieces(const Scene& scene, const Chart& chart,
                                       const std::vector<Edge>& edges) {
  const std::size_t n = chart.triangles.size();
  std::vector<std::uint64_t> cell(n);
  for (std::size_t k = 0; k < n; ++k) {
    const Triangle& tri = scene.triangles[chart.triangles[k]];
    const Vec3 c =
        (scene.vertices[tri.v[0]] + scene.vertices[tri.v[1]] + scene.vertices[tri.v[2]]) / 3.0;
    cell[k] = cell_of(dot(c, chart.v) - chart.v0, chart.dv, chart.nv) * std::uint64_t(chart.nu) +
              cell_of(dot(c, chart.u) - chart.u0, chart.du, chart.nu);
  }
  UnionFind sets(n);
  for (const Edge& e : edges)
    if (e.users.size() == 2 && cell[e.users[0]] == cell[e.users[1]])
      sets.unite(e.users[0], e.users[1]);
  std::unordered_map<std::uint32_t, std::uint32_t> number;
  std::vector<std::uint32_t> piece(n);
  for (std::uint32_t k = 0; k < n; ++k)
    piece[k] = number.emplace(sets.find(k), std::uint32_t(number.size())).first->second;
  return piece;
}

}  // namespace

std::vector<std::uint32_t> clipped_cells(const Scene& scene, const Chart& chart,
                                         const std::vector<std::uint32_t>& weld) {
  const std::vector<Edge> edges = chart_edges(scene, chart, weld);
  const std::vector<std::uint32_t> piece = cell_pieces(scene, chart, edges);
  const std::size_t m = piece.empty() ? 0 : *std::max_element(piece.begin(), piece.end()) + 1;
  std::vector<Moments> group(m);  // per group, kept at its root
  for (std::size_t k = 0; k < piece.size(); ++k)
    group[piece[k]] += triangle_moments(scene, chart, chart.triangles[k]);
  std::vector<std::set<std::uint32_t>> next(m);  // pieces sharing an edge
  for (const Edge& e : edges) {
    if (e.users.size() != 2) continue;
    const std::uint32_t a = piece[e.users[0]], b = piece[e.users[1]];
    if (a != b) next[a].insert(b), next[b].insert(a);
  }
  // Slivers, smallest first (ties: the lower number), each join the neighbouring group that
  // makes the most compact union (ties: the lower root), if compact enough.
  std::vector<std::uint32_t> order(m);
  std::iota(order.begin(), order.end(), 0u);
  std::stable_sort(order.begin(), order.end(),
                   [&](std::uint32_t a, std::uint32_t b) { return group[a].area < group[b].area; });
  UnionFind groups(m);
  std::vector<std::vector<std::uint32_t>> members(m);
  for (std::uint32_t p = 0; p < m; ++p) members[p] = {p};
  for (std::uint32_t p : order) {
    const std::uint32_t g = groups.find(p);
    if (!(group[g].area < kSliver * chart.du * chart.dv)) continue;
    std::set<std::uint32_t> across;  // neighbouring groups, in root order
    for (std::uint32_t q : members[g])
      for (std::uint32_t r : next[q])
        if (groups.find(r) != g) across.insert(groups.find(r));
    std::uint32_t best = g;
    double best_c = std::max(kCompact, group[g].compactness());
    for (std::uint32_t r : across) {
      Moments joined = group[g];
      joined += group[r];
      if (joined.compactness() < best_c * (1 - 1e-9)) best = r, best_c = joined.compactness();
    }
    if (best == g) continue;  // no neighbour makes a compact enough patch with it
    std::uint32_t keep = best, gone = g;
    if (members[keep].size() < members[gone].size()) std::swap(keep, gone);
    groups.parent[gone] = keep;
    group[keep] += group[gone];
    members[keep].insert(members[keep].end(), members[gone].begin(), members[gone].end());
    members[gone].clear();
  }
  // Numbered in the order of their first triangle.
  std::unordered_map<std::uint32_t, std::uint32_t> number;
  std::vector<std::uint32_t> out(piece.size());
  for (std::size_t k = 0; k < piece.size(); ++k)
    out[k] = number.emplace(groups.find(piece[k]), std::uint32_t(number.size())).first->second;
  return out;
}

}  // namespace hearthray::patch_layout
