// Topology of a mesh: vertices welded by position, edges counted by the faces using them.
#include "mesh/topology.hpp"

#include <algorithm>
#include <numeric>

#include "hearthray/scene.hpp"

namespace hearthray {

namespace mesh_detail {

std::vector<std::uint32_t> weld_by_position(const std::vector<Vec3>& vertices) {
  // Sort once, equal neighbours share an id (O(n log n)).
  std::vector<std::uint32_t> order(vertices.size());
  std::iota(order.begin(), order.end(), 0u);
  auto less = [&](std::uint32_t a, std::uint32_t b) {
    const Vec3& p = vertices[a];
    const Vec3& q = vertices[b];
    if (p.x != q.x) return p.x < q.x;
    if (p.y != q.y) return p.y < q.y;
    return p.z < q.z;
  };
  std::sort(order.begin(), order.end(), less);
  std::vector<std::uint32_t> weld(vertices.size());
  std::uint32_t id = 0;
  for (std::size_t i = 0; i < order.size(); ++i) {
    if (i > 0 && !(vertices[order[i]] == vertices[order[i - 1]])) ++id;
    weld[order[i]] = id;
  }
  return weld;
}

}  // namespace mesh_detail

MeshTopology analyse_topology(const Scene& scene) {
  MeshTopology topology;
  const auto& vertices = scene.vertices;

  const std::vector<std::uint32_t> weld = mesh_detail::weld_by_position(vertices);

  std::vector<std::uint64_t> edges;
  std::vector<std::uint64_t> one_sided_edges;  // edges of one-sided surfaces only
  std::vector<std::array<std::uint32_t, 3>> faces;
  edges.reserve(3 * scene.triangles.size());
  faces.reserve(scene.triangles.size());
  for (const Triangle& t : scene.triangles) {
    std::array<std::uint32_t, 3> w{weld[t.v[0]], weld[t.v[1]], weld[t.v[2]]};
    for (int k = 0; k < 3; ++k) {
      std::uint32_t a = w[k], b = w[(k + 1) % 3];
      if (a == b) continue;
      if (a > b) std::swap(a, b);
      edges.push_back((static_cast<std::uint64_t>(a) << 32) | b);
      if (!scene.surfaces[t.surface].two_sided) one_sided_edges.push_back(edges.back());
    }
    std::sort(w.begin(), w.end());
    faces.push_back(w);
  }

  std::sort(edges.begin(), edges.end());
  for (std::size_t i = 0; i < edges.size();) {
    std::size_t j = i;
    while (j < edges.size() && edges[j] == edges[i]) ++j;
    const std::size_t uses = j - i;
    if (uses == 1) ++topology.boundary_edges;
    if (uses > 2) ++topology.nonmanifold_edges;
    i = j;
  }
  std::sort(one_sided_edges.begin(), one_sided_edges.end());
  bool one_sided_manifold = !one_sided_edges.empty();
  for (std::size_t i = 0; i < one_sided_edges.size() && one_sided_manifold;) {
    std::size_t j = i;
    while (j < one_sided_edges.size() && one_sided_edges[j] == one_sided_edges[i]) ++j;
    one_sided_manifold = j - i == 2;
    i = j;
  }
  topology.one_sided_closed = one_sided_manifold;
  std::sort(faces.begin(), faces.end());
  for (std::size_t i = 1; i < faces.size(); ++i) {
    if (faces[i] == faces[i - 1]) ++topology.duplicate_triangles;
  }
  topology.closed =
      !scene.triangles.empty() && topology.boundary_edges == 0 && topology.nonmanifold_edges == 0;
  return topology;
}

}  // namespace hearthray
