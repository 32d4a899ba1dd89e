#include "hearthray/patches.hpp"

namespace hearthray {

PatchSet make_surface_patches(const Scene& scene) {
  PatchSet set;
  const std::size_t n_tri = scene.triangles.size();
  set.front_patch_of_triangle.assign(n_tri, PatchSet::kNoPatch);
  set.back_patch_of_triangle.assign(n_tri, PatchSet::kNoPatch);
  set.triangle_offset.push_back(0);
  for (std::uint32_t s = 0; s < scene.surfaces.size(); ++s) {
    const Surface& surface = scene.surfaces[s];
    const int sides = surface.two_sided ? 2 : 1;
    for (int k = 0; k < sides; ++k) {
      Patch patch;
      patch.surface = s;
      patch.side = k == 0 ? Side::front : Side::back;
      patch.name = surface.two_sided ? surface.name + (k == 0 ? " (front)" : " (back)")
                                     : surface.name;
      patch.area = surface.area;
      const auto index = static_cast<std::uint32_t>(set.patches.size());
      for (std::uint32_t t = surface.first_triangle;
           t < surface.first_triangle + surface.triangle_count; ++t) {
        set.triangle_index.push_back(t);
        (k == 0 ? set.front_patch_of_triangle : set.back_patch_of_triangle)[t] = index;
      }
      set.triangle_offset.push_back(static_cast<std::uint32_t>(set.triangle_index.size()));
      set.patches.push_back(std::move(patch));
    }
  }
  return set;
}

}  // namespace hearthray
