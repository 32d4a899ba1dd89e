// Conforming longest-edge bisection (after Rivara, "Algorithms for refining triangular grids
// suitable for adaptive and multigrid techniques", Int. J. Numer. Meth. Eng. 20, 1984): the
// edge chosen for a triangle is split in every triangle that shares it.
#include <algorithm>
#include <cmath>
#include <map>
#include <numeric>
#include <queue>
#include <unordered_map>

#include "hearthray/error.hpp"
#include "hearthray/patches.hpp"

namespace hearthray {

namespace {

// Weld ids: vertices at exactly the same position share an id.
std::vector<std::uint32_t> weld_ids(const std::vector<Vec3>& vertices) {
  std::vector<std::uint32_t> order(vertices.size());
  std::iota(order.begin(), order.end(), 0u);
  std::sort(order.begin(), order.end(), [&](std::uint32_t a, std::uint32_t b) {
    const Vec3 &p = vertices[a], &q = vertices[b];
    if (p.x != q.x) return p.x < q.x;
    if (p.y != q.y) return p.y < q.y;
    return p.z < q.z;
  });
  std::vector<std::uint32_t> id(vertices.size());
  std::uint32_t next = 0;
  for (std::size_t i = 0; i < order.size(); ++i) {
    if (i > 0 && !(vertices[order[i]] == vertices[order[i - 1]])) ++next;
    id[order[i]] = next;
  }
  return id;
}

std::uint64_t edge_key(std::uint32_t a, std::uint32_t b) {
  if (a > b) std::swap(a, b);
  return (std::uint64_t(a) << 32) | b;
}

}  // namespace

Scene subdivide(const Scene& scene, const std::vector<PatchSpec>& specs) {
  if (specs.size() != scene.surfaces.size())
    throw InputError("subdivide: one patch spec per surface expected");
  std::vector<double> limit(scene.surfaces.size(), INFINITY);
  for (std::size_t s = 0; s < specs.size(); ++s) {
    if (specs[s].mode != PatchSpec::Mode::size) continue;
    if (!(specs[s].size > 0) || !std::isfinite(specs[s].size))
      throw InputError("surface '" + scene.surfaces[s].name + "': patch size must be positive");
    limit[s] = specs[s].size;
  }

  std::vector<Vec3> vertices = scene.vertices;
  std::vector<std::uint32_t> weld = weld_ids(vertices);
  std::uint32_t next_weld = weld.empty() ? 0 : *std::max_element(weld.begin(), weld.end()) + 1;
  std::vector<Triangle> tris = scene.triangles;
  std::vector<bool> alive(tris.size(), true);

  // Welded edge -> triangles using it (a handful each), and edge -> midpoint vertex.
  std::unordered_map<std::uint64_t, std::vector<std::uint32_t>> users;
  auto add_uses = [&](std::uint32_t t) {
    for (int k = 0; k < 3; ++k)
      users[edge_key(weld[tris[t].v[k]], weld[tris[t].v[(k + 1) % 3]])].push_back(t);
  };
  auto drop_uses = [&](std::uint32_t t) {
    for (int k = 0; k < 3; ++k) {
      auto& list = users[edge_key(weld[tris[t].v[k]], weld[tris[t].v[(k + 1) % 3]])];
      list.erase(std::remove(list.begin(), list.end(), t), list.end());
    }
  };
  for (std::uint32_t t = 0; t < tris.size(); ++t) add_uses(t);

  auto edge_length2 = [&](std::uint32_t a, std::uint32_t b) {
    const Vec3 d = vertices[a] - vertices[b];
    return dot(d, d);
  };
  // Longest edge of triangle t as its local index k (edge v[k] -> v[k+1]).
  auto longest = [&](std::uint32_t t) {
    int best = 0;
    double best_len = -1;
    for (int k = 0; k < 3; ++k) {
      const double l = edge_length2(tris[t].v[k], tris[t].v[(k + 1) % 3]);
      if (l > best_len) best_len = l, best = k;
    }
    return std::make_pair(best, best_len);
  };

  std::queue<std::uint32_t> work;
  for (std::uint32_t t = 0; t < tris.size(); ++t) work.push(t);
  while (!work.empty()) {
    const std::uint32_t t = work.front();
    work.pop();
    if (!alive[t]) continue;
    const auto [k, len2] = longest(t);
    const double lim = limit[tris[t].surface];
    if (!(len2 > lim * lim)) continue;
    const std::uint32_t a = tris[t].v[k], b = tris[t].v[(k + 1) % 3];
    const std::uint64_t key = edge_key(weld[a], weld[b]);
    // One midpoint vertex for the edge, shared by every triangle that splits it.
    const std::uint32_t m = static_cast<std::uint32_t>(vertices.size());
    vertices.push_back((vertices[a] + vertices[b]) * 0.5);
    weld.push_back(next_weld++);
    const std::vector<std::uint32_t> sharing = users[key];
    for (std::uint32_t u : sharing) {
      drop_uses(u);
      alive[u] = false;
      // Triangle u has the welded edge somewhere: find it and split there.
      Triangle tri = tris[u];
      int j = 0;
      for (; j < 3; ++j)
        if (edge_key(weld[tri.v[j]], weld[tri.v[(j + 1) % 3]]) == key) break;
      const std::uint32_t p = tri.v[j], q = tri.v[(j + 1) % 3], r = tri.v[(j + 2) % 3];
      Triangle first{{p, m, r}, tri.surface}, second{{m, q, r}, tri.surface};
      for (const Triangle& child : {first, second}) {
        const auto id = static_cast<std::uint32_t>(tris.size());
        tris.push_back(child);
        alive.push_back(true);
        add_uses(id);
        work.push(id);
      }
    }
  }

  // Rebuild the scene with triangles grouped by surface, in the original order.
  Scene out;
  out.source = scene.source;
  out.vertices = std::move(vertices);
  out.surfaces = scene.surfaces;
  out.warnings = scene.warnings;
  out.bounds = scene.bounds;
  std::vector<std::vector<std::uint32_t>> by_surface(scene.surfaces.size());
  for (std::uint32_t t = 0; t < tris.size(); ++t)
    if (alive[t]) by_surface[tris[t].surface].push_back(t);
  for (std::size_t s = 0; s < by_surface.size(); ++s) {
    out.surfaces[s].first_triangle = static_cast<std::uint32_t>(out.triangles.size());
    out.surfaces[s].triangle_count = static_cast<std::uint32_t>(by_surface[s].size());
    for (std::uint32_t t : by_surface[s]) out.triangles.push_back(tris[t]);
  }
  return out;
}

}  // namespace hearthray
