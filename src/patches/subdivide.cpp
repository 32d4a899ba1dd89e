// Cutting a mesh for its patches (see patches.hpp and patches/layout.hpp): rectangle and
// cylinder charts are cut along planes (grid lines, band boundaries), charts of other shapes
// split by conforming longest-edge bisection (after Rivara, "Algorithms for refining
// triangular grids suitable for adaptive and multigrid techniques", Int. J. Numer. Meth. Eng.
// 20, 1984). Both split an edge in every triangle that shares it, so the mesh stays conforming.
#include <algorithm>
#include <cmath>
#include <queue>
#include <unordered_map>

#include "hearthray/error.hpp"
#include "hearthray/patches.hpp"
#include "patches/layout.hpp"

namespace hearthray {

namespace {

using patch_layout::edge_key;

// A welded mesh whose edges are split at a point in every triangle that uses them: no
// T-junctions. Each triangle carries a tag (its chart, or kNoTag) and a longest-edge limit,
// which its pieces inherit.
class Refiner {
 public:
  static constexpr std::uint32_t kNoTag = 0xffffffffu;

  explicit Refiner(const Scene& scene)
      : vertices_(scene.vertices),
        weld_(patch_layout::weld_ids(vertices_)),
        tris_(scene.triangles),
        made_by_(vertices_.size(), kNoTag),
        alive_(tris_.size(), true),
        tag_(tris_.size(), kNoTag),
        limit_(tris_.size(), INFINITY) {
    next_weld_ = weld_.empty() ? 0 : *std::max_element(weld_.begin(), weld_.end()) + 1;
    for (std::uint32_t t = 0; t < tris_.size(); ++t) add_uses(t);
  }

  void set(std::uint32_t t, std::uint32_t tag, double limit) {
    tag_[t] = tag;
    limit_[t] = limit;
    if (tag == kNoTag) return;
    if (tag >= members_.size()) members_.resize(tag + 1);
    members_[tag].push_back(t);
  }

  // Cuts the triangles tagged `tag` along `plane`: every edge of theirs whose ends lie
  // strictly on opposite sides is split where it crosses, until none crosses. The vertices a
  // cut makes count as on its plane (whatever the rounding of their position), so each split
  // leaves edges ending on the plane: this ends, and the plane is then made of edges.
  void cut(std::uint32_t tag, const patch_layout::CutPlane& plane) {
    ++plane_;
    std::queue<std::uint32_t> work;
    for (std::uint32_t t : members_[tag])
      if (alive_[t]) work.push(t);
    auto side = [&](std::uint32_t v) {
      if (made_by_[v] == plane_) return 0.0;
      const double d = dot(plane.normal, vertices_[v]) - plane.offset;
      return std::fabs(d) <= plane.tolerance ? 0.0 : d;
    };
    while (!work.empty()) {
      const std::uint32_t t = work.front();
      work.pop();
      if (!alive_[t] || tag_[t] != tag) continue;
      for (int k = 0; k < 3; ++k) {
        const std::uint32_t a = tris_[t].v[k], b = tris_[t].v[(k + 1) % 3];
        const double da = side(a), db = side(b);
        if (!((da < 0 && db > 0) || (da > 0 && db < 0))) continue;
        const Vec3 at = vertices_[a] + (vertices_[b] - vertices_[a]) * (da / (da - db));
        split(a, b, at, plane_, &work);
        break;
      }
    }
  }

  // Splits every triangle whose longest edge exceeds its limit until none does.
  void bisect() {
    std::queue<std::uint32_t> work;
    for (std::uint32_t t = 0; t < tris_.size(); ++t)
      if (alive_[t] && std::isfinite(limit_[t])) work.push(t);
    while (!work.empty()) {
      const std::uint32_t t = work.front();
      work.pop();
      if (!alive_[t]) continue;
      const auto [k, len2] = longest(t);
      if (len2 > limit_[t] * limit_[t]) {
        const std::uint32_t a = tris_[t].v[k], b = tris_[t].v[(k + 1) % 3];
        split(a, b, (vertices_[a] + vertices_[b]) * 0.5, kNoTag, &work);
      }
    }
  }

  // The refined scene, triangles grouped by surface in their order of creation.
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
  // Splits the edge a-b at one new vertex `at` (made by cut `plane`, or kNoTag) shared by every
  // triangle that uses it; the halves inherit their parent's tag and limit and join the work
  // queue.
  void split(std::uint32_t a, std::uint32_t b, const Vec3& at, std::uint32_t plane,
             std::queue<std::uint32_t>* work) {
    const std::uint64_t edge = edge_key(weld_[a], weld_[b]);
    const std::uint32_t m = static_cast<std::uint32_t>(vertices_.size());
    vertices_.push_back(at);
    made_by_.push_back(plane);
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
        tag_.push_back(tag_[u]);
        limit_.push_back(limit_[u]);
        if (tag_[u] != kNoTag) members_[tag_[u]].push_back(id);
        add_uses(id);
        work->push(id);
      }
    }
  }

  std::vector<Vec3> vertices_;
  std::vector<std::uint32_t> weld_;
  std::uint32_t next_weld_ = 0;
  std::vector<Triangle> tris_;
  std::vector<std::uint32_t> made_by_;  // per vertex: the cut that made it, or kNoTag
  std::uint32_t plane_ = 0;             // serial number of the current cut
  std::vector<bool> alive_;
  std::vector<std::uint32_t> tag_;
  std::vector<double> limit_;
  std::vector<std::vector<std::uint32_t>> members_;  // triangles ever tagged with each tag
  // Welded edge -> triangles using it (a handful each).
  std::unordered_map<std::uint64_t, std::vector<std::uint32_t>> users_;
};

void check_size(const Scene& scene, const std::vector<PatchSpec>& specs, std::size_t s) {
  if (!(specs[s].size > 0) || !std::isfinite(specs[s].size))
    throw InputError("surface '" + scene.surfaces[s].name + "': patch size must be positive");
}

}  // namespace

Scene split_long_edges(const Scene& scene, const std::vector<double>& limit) {
  if (limit.size() != scene.surfaces.size())
    throw InputError("split_long_edges: one limit per surface expected");
  Refiner refiner(scene);
  for (std::uint32_t t = 0; t < scene.triangles.size(); ++t)
    refiner.set(t, Refiner::kNoTag, limit[scene.triangles[t].surface]);
  refiner.bisect();
  return refiner.result(scene);
}

Scene subdivide(const Scene& scene, const std::vector<PatchSpec>& specs) {
  if (specs.size() != scene.surfaces.size())
    throw InputError("subdivide: one patch spec per surface expected");
  const std::vector<std::uint32_t> weld = patch_layout::weld_ids(scene.vertices);
  Refiner refiner(scene);
  std::vector<std::vector<patch_layout::CutPlane>> planes;  // per tag
  for (std::uint32_t s = 0; s < scene.surfaces.size(); ++s) {
    if (specs[s].mode != PatchSpec::Mode::size) continue;
    check_size(scene, specs, s);
    for (const patch_layout::Chart& chart : patch_layout::lay_out(scene, s, specs[s].size, weld)) {
      const bool split = chart.kind == patch_layout::ChartKind::regions && chart.regions > 1;
      const auto tag = static_cast<std::uint32_t>(planes.size());
      for (std::uint32_t t : chart.triangles)
        refiner.set(t, tag, split ? 0.5 * specs[s].size : INFINITY);
      planes.push_back(patch_layout::cut_planes(chart));
    }
  }
  for (std::uint32_t tag = 0; tag < planes.size(); ++tag)
    for (const patch_layout::CutPlane& plane : planes[tag]) refiner.cut(tag, plane);
  refiner.bisect();
  return refiner.result(scene);
}

}  // namespace hearthray
