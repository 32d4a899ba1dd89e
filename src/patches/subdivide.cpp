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

// Longest-edge bisection of a welded mesh: splitting an edge splits every triangle that uses
// it, at one shared midpoint, so the mesh stays conforming (no T-junctions).
class Bisection {
 public:
  explicit Bisection(const Scene& scene)
      : vertices_(scene.vertices),
        weld_(weld_ids(vertices_)),
        tris_(scene.triangles),
        alive_(tris_.size(), true) {
    next_weld_ = weld_.empty() ? 0 : *std::max_element(weld_.begin(), weld_.end()) + 1;
    for (std::uint32_t t = 0; t < tris_.size(); ++t) add_uses(t);
  }

  // Splits until no edge is longer than its surface's limit.
  void run(const std::vector<double>& limit) {
    std::queue<std::uint32_t> work;
    for (std::uint32_t t = 0; t < tris_.size(); ++t) work.push(t);
    while (!work.empty()) {
      const std::uint32_t t = work.front();
      work.pop();
      if (!alive_[t]) continue;
      const auto [k, len2] = longest(t);
      const double lim = limit[tris_[t].surface];
      if (len2 > lim * lim) split(tris_[t].v[k], tris_[t].v[(k + 1) % 3], &work);
    }
  }

  // The scene with the split triangles grouped by surface, in the original order.
  Scene result(const Scene& scene) {
    Scene out;
    out.source = scene.source;
    out.vertices = std::move(vertices_);
    out.surfaces = scene.surfaces;
    out.warnings = scene.warnings;
    out.bounds = scene.bounds;
    std::vector<std::vector<std::uint32_t>> by_surface(scene.surfaces.size());
    for (std::uint32_t t = 0; t < tris_.size(); ++t)
      if (alive_[t]) by_surface[tris_[t].surface].push_back(t);
    for (std::size_t s = 0; s < by_surface.size(); ++s) {
      out.surfaces[s].first_triangle = static_cast<std::uint32_t>(out.triangles.size());
      out.surfaces[s].triangle_count = static_cast<std::uint32_t>(by_surface[s].size());
      for (std::uint32_t t : by_surface[s]) out.triangles.push_back(tris_[t]);
    }
    return out;
  }

 private:
  std::uint64_t key(const Triangle& tri, int k) const {
    return edge_key(weld_[tri.v[k]], weld_[tri.v[(k + 1) % 3]]);
  }
  void add_uses(std::uint32_t t) {
    for (int k = 0; k < 3; ++k) users_[key(tris_[t], k)].push_back(t);
  }
  void drop_uses(std::uint32_t t) {
    for (int k = 0; k < 3; ++k) {
      auto& list = users_[key(tris_[t], k)];
      list.erase(std::remove(list.begin(), list.end(), t), list.end());
    }
  }
  // Longest edge of triangle t as its local index k (edge v[k] -> v[k+1]), and its square.
  std::pair<int, double> longest(std::uint32_t t) const {
    int best = 0;
    double best_len = -1;
    for (int k = 0; k < 3; ++k) {
      const Vec3 d = vertices_[tris_[t].v[k]] - vertices_[tris_[t].v[(k + 1) % 3]];
      const double l = dot(d, d);
      if (l > best_len) best_len = l, best = k;
    }
    return {best, best_len};
  }
  // Splits the edge a-b at one midpoint vertex shared by every triangle that uses it; the
  // halves join the work queue.
  void split(std::uint32_t a, std::uint32_t b, std::queue<std::uint32_t>* work) {
    const std::uint64_t edge = edge_key(weld_[a], weld_[b]);
    const std::uint32_t m = static_cast<std::uint32_t>(vertices_.size());
    vertices_.push_back((vertices_[a] + vertices_[b]) * 0.5);
    weld_.push_back(next_weld_++);
    const std::vector<std::uint32_t> sharing = users_[edge];
    for (std::uint32_t u : sharing) {
      drop_uses(u);
      alive_[u] = false;
      // Triangle u has the welded edge somewhere: find it and split there.
      const Triangle tri = tris_[u];
      int j = 0;
      for (; j < 3; ++j)
        if (key(tri, j) == edge) break;
      const std::uint32_t p = tri.v[j], q = tri.v[(j + 1) % 3], r = tri.v[(j + 2) % 3];
      const Triangle first{{p, m, r}, tri.surface}, second{{m, q, r}, tri.surface};
      for (const Triangle& child : {first, second}) {
        const auto id = static_cast<std::uint32_t>(tris_.size());
        tris_.push_back(child);
        alive_.push_back(true);
        add_uses(id);
        work->push(id);
      }
    }
  }

  std::vector<Vec3> vertices_;
  std::vector<std::uint32_t> weld_;
  std::uint32_t next_weld_ = 0;
  std::vector<Triangle> tris_;
  std::vector<bool> alive_;
  // Welded edge -> triangles using it (a handful each).
  std::unordered_map<std::uint64_t, std::vector<std::uint32_t>> users_;
};

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
  Bisection bisection(scene);
  bisection.run(limit);
  return bisection.result(scene);
}

}  // namespace hearthray
