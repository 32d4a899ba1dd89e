#include "hearthray/fields.hpp"

#include "hearthray/error.hpp"

namespace hearthray {

void check_field(const PatchField& field, const PatchSet& patches) {
  if (field.values.size() != patches.size()) {
    throw InputError("field '" + field.name + "' has " + std::to_string(field.values.size()) +
                     " values but the model has " + std::to_string(patches.size()) +
                     " patches (one value per patch expected)");
  }
}

PatchField patch_area_field(const PatchSet& patches) {
  PatchField field{"area", "m²", {}};
  field.values.reserve(patches.size());
  for (const Patch& p : patches.patches) field.values.push_back(p.area);
  return field;
}

PatchField surface_index_field(const PatchSet& patches) {
  PatchField field{"surface", "", {}};
  field.values.reserve(patches.size());
  for (const Patch& p : patches.patches) field.values.push_back(double(p.surface));
  return field;
}

PatchField view_factor_to_surface_field(const Scene& scene, const PatchSet& patches,
                                        const ViewFactors& factors, std::uint32_t surface) {
  if (surface >= scene.surfaces.size())
    throw InputError("view factor to surface " + std::to_string(surface) + ": the scene has " +
                     std::to_string(scene.surfaces.size()) + " surfaces");
  if (factors.size() != patches.size() || std::size_t(factors.F.rows()) != patches.size())
    throw InputError("view factor to '" + scene.surfaces[surface].name +
                     "': the factor matrix does not match the patches (merge shards first)");
  PatchField field{"view factor to " + scene.surfaces[surface].name, "-", {}};
  field.values.assign(patches.size(), 0.0);
  for (int row = 0; row < factors.F.outerSize(); ++row) {
    for (SparseMatrix::InnerIterator it(factors.F, row); it; ++it) {
      if (patches.patches[std::size_t(it.col())].surface == surface)
        field.values[std::size_t(row)] += it.value();
    }
  }
  return field;
}

}  // namespace hearthray
