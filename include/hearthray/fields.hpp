// Per-patch quantities, as the output writers (VTU files, pictures) read them: one value per
// patch of a PatchSet, NaN where a patch has no value.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "hearthray/patches.hpp"
#include "hearthray/view_factors.hpp"

namespace hearthray {

struct PatchField {
  std::string name;            // e.g. "net heat flux"
  std::string unit;            // e.g. "W/m²"; "-" for a pure number, "" for an index
  std::vector<double> values;  // one value per patch (NaN = no data)
};

// Throws InputError naming the field when it does not hold one value per patch.
void check_field(const PatchField& field, const PatchSet& patches);

// Fields that need no solve.
PatchField patch_area_field(const PatchSet& patches);     // "area" [m²]
PatchField surface_index_field(const PatchSet& patches);  // "surface" (index into Scene)
// Each patch's view factor to the surface `surface` (summed over that surface's patches, both
// sides of a two-sided one), read from `factors` (a matrix over `patches`).
PatchField view_factor_to_surface_field(const Scene& scene, const PatchSet& patches,
                                        const ViewFactors& factors, std::uint32_t surface);

}  // namespace hearthray
