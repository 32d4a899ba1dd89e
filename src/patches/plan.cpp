// The patch plan of a run: subdivision where a surface asks for a patch size, the patches,
// and the rays of each.
#include <algorithm>
#include <stdexcept>

#include "hearthray/patches.hpp"

namespace hearthray {

PatchPlan plan_patches(const Scene& scene, std::vector<PatchSpec> specs, const RayBudget& budget) {
  if (specs.size() != scene.surfaces.size())
    throw std::invalid_argument("plan_patches: one patch spec per surface expected");
  PatchPlan plan;
  plan.specs = std::move(specs);
  const bool split = std::any_of(plan.specs.begin(), plan.specs.end(), [](const PatchSpec& p) {
    return p.mode == PatchSpec::Mode::size;
  });
  plan.scene = split ? subdivide(scene, plan.specs) : scene;
  plan.patches = make_patches(plan.scene, plan.specs);
  if (budget.total > 0) {
    plan.rays = rays_by_area(plan.patches, budget.total, budget.min_per_patch);
  } else {
    plan.rays.assign(plan.patches.size(), budget.per_patch);
  }
  return plan;
}

}  // namespace hearthray
