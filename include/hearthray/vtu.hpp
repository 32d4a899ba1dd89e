// VTK XML unstructured-grid file (.vtu, ASCII) of the patches and their fields, for standard
// 3-D viewers (the format is VTK's "VTK File Formats" specification, UnstructuredGrid).
//
// Each triangle of each patch is one VTK_TRIANGLE cell (type 5), patch after patch in patch
// order. A two-sided surface therefore gives every triangle twice: once for its front patch
// and once for its back patch. The back cell lists the triangle's vertices in reverse order,
// so that a viewer's cell normal points out of the side the cell stands for. Points are the
// mesh vertices the triangles use, in metres, in the order of the mesh.
//
// Cell data: "surface" (Int32, index into Scene::surfaces), "patch" (Int32, index into
// PatchSet), "side" (Int32, 0 front, 1 back), then each field as Float64 named
// "<name> [<unit>]" ("<name>" when the unit is empty). NaN values are written as "nan".
// The surface names travel as field data of the grid: the String array "surface_names", entry
// k the name of surface k (the cell data "surface"), and are listed in an XML comment after
// the header. The file is written under a temporary name and renamed: it appears whole.
#pragma once

#include <string>
#include <vector>

#include "hearthray/fields.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"

namespace hearthray {

// One integer for the whole data set, written as VTK field data (e.g. "converged" 1 or 0, so
// that a viewer shows whether the fields are an answer).
struct VtuFlag {
  std::string name;
  long value = 0;
};

// Throws InputError when the file cannot be written, a field does not hold one value per
// patch, or two arrays would get the same name.
void write_vtu(const std::string& path, const Scene& scene, const PatchSet& patches,
               const std::vector<PatchField>& fields, const std::vector<VtuFlag>& field_data = {});

// The array name write_vtu gives a field.
std::string vtu_array_name(const PatchField& field);

}  // namespace hearthray
