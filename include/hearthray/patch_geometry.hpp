// What each row and column of a view-factor matrix is: patch i of a PatchSet is row i and
// column i of the matrix, cell data `patch` = i in the VTU, and row i of the patch table.
// Geometry per patch: its surface and side, area, centroid and normal; its triangles are the
// PatchSet's (triangle_offset / triangle_index into the Scene).
#pragma once

#include <cstdint>
#include <iosfwd>
#include <string>
#include <vector>

#include "hearthray/geometry.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"

namespace hearthray {

struct PatchGeometry {
  // Per patch: the area-weighted centroid of its triangles (m), and the unit normal of the
  // side it radiates from (the area-weighted mean of its triangles' normals, reversed for a
  // back side, then normalised; a curved patch's mean normal).
  std::vector<Vec3> centroid;
  std::vector<Vec3> normal;
};

PatchGeometry patch_geometry(const Scene& scene, const PatchSet& patches);

// The patch table, one row per patch in patch (matrix) order, header
//   patch,name,surface,surface_index,side,area_m2,centroid_x_m,centroid_y_m,centroid_z_m,
//   normal_x,normal_y,normal_z,triangles
// `patch` counts from 0 (row 0 of the matrix; row 1 of a Matrix Market file), `side` is
// front or back, `triangles` the number of mesh triangles in the patch (the VTU has them).
void write_patches_csv(std::ostream& out, const Scene& scene, const PatchSet& patches);

// The patch table as a file, written whole or not at all (InputError when it cannot be).
void write_patches_csv_file(const std::string& path, const Scene& scene, const PatchSet& patches);

// The patch table and the VTU of the patches (write_vtu with the patch areas) beside a matrix
// file: for "dir/F.csv", "dir/F.patches.csv" and "dir/F.patches.vtu". Both written whole or
// not at all. Returns the two paths.
std::vector<std::string> write_patch_files_beside(const std::string& matrix_path,
                                                  const Scene& scene, const PatchSet& patches);

}  // namespace hearthray
