#include "hearthray/patches.hpp"

#include <tbb/parallel_for.h>

#include <algorithm>
#include <cmath>
#include <exception>
#include <map>
#include <optional>
#include <tuple>
#include <unordered_map>

#include "hearthray/error.hpp"
#include "patches/layout.hpp"

namespace hearthray {

namespace {

// Welded edge -> the triangles of a surface using it.
using EdgeUsers = std::unordered_map<std::uint64_t, std::vector<std::uint32_t>>;
EdgeUsers edge_users(const Scene& scene, const Surface& surface,
                     const std::vector<std::uint32_t>& weld) {
  EdgeUsers users;
  for (std::uint32_t t = surface.first_triangle;
       t < surface.first_triangle + surface.triangle_count; ++t)
    for (int k = 0; k < 3; ++k)
      users[patch_layout::edge_key(weld[scene.triangles[t].v[k]],
                                   weld[scene.triangles[t].v[(k + 1) % 3]])]
          .push_back(t);
  return users;
}

// Adds one patch per side of `surface` for each group of its triangles.
void add_groups(const Scene& scene, std::uint32_t s,
                const std::vector<std::vector<std::uint32_t>>& groups, PatchSet& set) {
  const Surface& surface = scene.surfaces[s];
  const int sides = surface.two_sided ? 2 : 1;
  const bool split = groups.size() > 1;
  for (int k = 0; k < sides; ++k) {
    for (std::size_t g = 0; g < groups.size(); ++g) {
      Patch patch;
      patch.surface = s;
      patch.piece = static_cast<std::uint32_t>(g);
      patch.side = k == 0 ? Side::front : Side::back;
      patch.name = surface.name;
      if (split) patch.name += "#" + std::to_string(g + 1);
      if (surface.two_sided) patch.name += k == 0 ? " (front)" : " (back)";
      const auto index = static_cast<std::uint32_t>(set.patches.size());
      for (std::uint32_t t : groups[g]) {
        patch.area += scene.triangle_area(t);
        set.triangle_index.push_back(t);
        (k == 0 ? set.front_patch_of_triangle : set.back_patch_of_triangle)[t] = index;
      }
      set.triangle_offset.push_back(static_cast<std::uint32_t>(set.triangle_index.size()));
      set.patches.push_back(std::move(patch));
    }
  }
}

// The key (chart << 32 | piece) of the piece of a larger chart that a small chart shares the
// longest edge with (ties: the lower key), or none: a post's cap joins the band it closes.
std::optional<std::uint64_t> neighbour_piece(const Scene& scene, const Surface& surface,
                                             const patch_layout::Chart& chart,
                                             const std::vector<std::uint64_t>& key,
                                             const std::vector<bool>& small, const EdgeUsers& users,
                                             const std::vector<std::uint32_t>& weld) {
  std::map<std::uint64_t, double> shared;
  for (std::uint32_t t : chart.triangles) {
    const Triangle& tri = scene.triangles[t];
    for (int k = 0; k < 3; ++k) {
      const std::uint32_t a = tri.v[k], b = tri.v[(k + 1) % 3];
      for (std::uint32_t u : users.at(patch_layout::edge_key(weld[a], weld[b]))) {
        const std::uint32_t i = u - surface.first_triangle;
        if (!small[i]) shared[key[i]] += norm(scene.vertices[b] - scene.vertices[a]);
      }
    }
  }
  std::optional<std::uint64_t> best;
  double longest = 0;
  for (const auto& [k, length] : shared)
    if (length > longest * (1 + 1e-9)) best = k, longest = length;
  return best;
}

// The patches of a surface cut by size, laid out chart by chart (patches/layout.hpp): groups
// in the order their first triangle appears, so patch numbers follow the mesh. A small chart
// joins the piece of a larger chart it shares the longest edge with; one that touches none
// shares the cell of a grid of the patch size its centroid falls in with other such charts.
std::vector<std::vector<std::uint32_t>> size_groups(const Scene& scene, std::uint32_t s,
                                                    double size,
                                                    const std::vector<std::uint32_t>& weld) {
  const Surface& surface = scene.surfaces[s];
  if (!(size > 0) || !std::isfinite(size))
    throw InputError("surface '" + surface.name + "': patch size must be positive");
  std::vector<std::uint64_t> key(surface.triangle_count);
  std::vector<bool> small(surface.triangle_count, false);
  const auto charts = patch_layout::lay_out(scene, s, size, weld);
  bool any_small = false;
  for (std::size_t c = 0; c < charts.size(); ++c) {
    const patch_layout::Chart& chart = charts[c];
    if (chart.kind == patch_layout::ChartKind::small) {
      any_small = true;
      for (std::uint32_t t : chart.triangles) small[t - surface.first_triangle] = true;
      continue;
    }
    const std::vector<std::uint32_t> piece = patch_layout::pieces(scene, chart, weld);
    for (std::size_t k = 0; k < piece.size(); ++k)
      key[chart.triangles[k] - surface.first_triangle] = (std::uint64_t(c) << 32) | piece[k];
  }
  if (any_small) {
    const EdgeUsers users = edge_users(scene, surface, weld);
    std::map<std::tuple<long long, long long, long long>, std::uint64_t> small_cells;
    for (const patch_layout::Chart& chart : charts) {
      if (chart.kind != patch_layout::ChartKind::small) continue;
      std::optional<std::uint64_t> k =
          neighbour_piece(scene, surface, chart, key, small, users, weld);
      if (!k) {
        const Vec3 m = chart.centroid / size;
        const auto cell = std::make_tuple(static_cast<long long>(std::floor(m.x)),
                                          static_cast<long long>(std::floor(m.y)),
                                          static_cast<long long>(std::floor(m.z)));
        k = small_cells.emplace(cell, (charts.size() + small_cells.size()) << 32).first->second;
      }
      for (std::uint32_t t : chart.triangles) key[t - surface.first_triangle] = *k;
    }
  }
  std::vector<std::vector<std::uint32_t>> groups;
  std::unordered_map<std::uint64_t, std::size_t> group_of_key;
  for (std::uint32_t i = 0; i < surface.triangle_count; ++i) {
    const auto [it, inserted] = group_of_key.emplace(key[i], groups.size());
    if (inserted) groups.emplace_back();
    groups[it->second].push_back(surface.first_triangle + i);
  }
  return groups;
}

}  // namespace

PatchSet make_patches(const Scene& scene, const std::vector<PatchSpec>& specs) {
  if (specs.size() != scene.surfaces.size())
    throw InputError("make_patches: one patch spec per surface expected");
  const auto n_surfaces = static_cast<std::uint32_t>(scene.surfaces.size());
  const bool by_size = std::any_of(specs.begin(), specs.end(), [](const PatchSpec& spec) {
    return spec.mode == PatchSpec::Mode::size;
  });
  // Welded vertex ids, made once when a surface needs them.
  const std::vector<std::uint32_t> weld =
      by_size ? patch_layout::weld_ids(scene.vertices) : std::vector<std::uint32_t>();
  // Each surface's groups depend on that surface alone: made in parallel (cutting surfaces by
  // size is the costly part), then numbered in surface order, so the patches do not depend on
  // the thread count.
  std::vector<std::vector<std::vector<std::uint32_t>>> groups(n_surfaces);
  std::vector<std::exception_ptr> failed(n_surfaces);  // the first in surface order is told
  tbb::parallel_for(std::uint32_t(0), n_surfaces, [&](std::uint32_t s) {
    try {
      const Surface& surface = scene.surfaces[s];
      const std::uint32_t t0 = surface.first_triangle, t1 = t0 + surface.triangle_count;
      switch (specs[s].mode) {
        case PatchSpec::Mode::whole: {
          groups[s].emplace_back();
          for (std::uint32_t t = t0; t < t1; ++t) groups[s].back().push_back(t);
          break;
        }
        case PatchSpec::Mode::per_triangle: {
          for (std::uint32_t t = t0; t < t1; ++t) groups[s].push_back({t});
          break;
        }
        case PatchSpec::Mode::size: {
          groups[s] = size_groups(scene, s, specs[s].size, weld);
          break;
        }
      }
    } catch (...) {
      failed[s] = std::current_exception();
    }
  });
  for (const std::exception_ptr& e : failed)
    if (e) std::rethrow_exception(e);
  PatchSet set;
  const std::size_t n_tri = scene.triangles.size();
  set.front_patch_of_triangle.assign(n_tri, PatchSet::kNoPatch);
  set.back_patch_of_triangle.assign(n_tri, PatchSet::kNoPatch);
  set.triangle_offset.push_back(0);
  for (std::uint32_t s = 0; s < n_surfaces; ++s) add_groups(scene, s, groups[s], set);
  return set;
}

PatchSet make_surface_patches(const Scene& scene) {
  return make_patches(scene, std::vector<PatchSpec>(scene.surfaces.size()));
}

std::vector<std::uint64_t> rays_by_area(const PatchSet& patches, std::uint64_t total,
                                        std::uint64_t floor) {
  double area = 0;
  for (const Patch& p : patches.patches) area += p.area;
  std::vector<std::uint64_t> rays(patches.size());
  for (std::size_t i = 0; i < patches.size(); ++i) {
    const double share = area > 0 ? patches.patches[i].area / area : 0.0;
    rays[i] =
        std::max<std::uint64_t>(floor, static_cast<std::uint64_t>(std::llround(share * total)));
  }
  return rays;
}

}  // namespace hearthray
