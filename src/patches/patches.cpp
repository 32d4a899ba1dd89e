#include "hearthray/patches.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <tuple>

#include "hearthray/error.hpp"

namespace hearthray {

namespace {

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

}  // namespace

PatchSet make_patches(const Scene& scene, const std::vector<PatchSpec>& specs) {
  if (specs.size() != scene.surfaces.size())
    throw InputError("make_patches: one patch spec per surface expected");
  PatchSet set;
  const std::size_t n_tri = scene.triangles.size();
  set.front_patch_of_triangle.assign(n_tri, PatchSet::kNoPatch);
  set.back_patch_of_triangle.assign(n_tri, PatchSet::kNoPatch);
  set.triangle_offset.push_back(0);
  for (std::uint32_t s = 0; s < scene.surfaces.size(); ++s) {
    const Surface& surface = scene.surfaces[s];
    const std::uint32_t t0 = surface.first_triangle, t1 = t0 + surface.triangle_count;
    std::vector<std::vector<std::uint32_t>> groups;
    switch (specs[s].mode) {
      case PatchSpec::Mode::whole: {
        groups.emplace_back();
        for (std::uint32_t t = t0; t < t1; ++t) groups.back().push_back(t);
        break;
      }
      case PatchSpec::Mode::per_triangle: {
        for (std::uint32_t t = t0; t < t1; ++t) groups.push_back({t});
        break;
      }
      case PatchSpec::Mode::size: {
        const double size = specs[s].size;
        if (!(size > 0) || !std::isfinite(size))
          throw InputError("surface '" + surface.name + "': patch size must be positive");
        // Grid cells keyed by the integer cell of each triangle's centroid; groups in the
        // order their first triangle appears, so patch numbers follow the mesh.
        std::map<std::tuple<long long, long long, long long>, std::size_t> cell_group;
        for (std::uint32_t t = t0; t < t1; ++t) {
          const Triangle& tri = scene.triangles[t];
          const Vec3 c =
              (scene.vertices[tri.v[0]] + scene.vertices[tri.v[1]] + scene.vertices[tri.v[2]]) /
              3.0;
          const auto key = std::make_tuple(static_cast<long long>(std::floor(c.x / size)),
                                           static_cast<long long>(std::floor(c.y / size)),
                                           static_cast<long long>(std::floor(c.z / size)));
          const auto [it, inserted] = cell_group.emplace(key, groups.size());
          if (inserted) groups.emplace_back();
          groups[it->second].push_back(t);
        }
        break;
      }
    }
    add_groups(scene, s, groups, set);
  }
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
