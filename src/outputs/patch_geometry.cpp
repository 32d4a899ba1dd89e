// Patch geometry and the patch table written beside every view-factor matrix.
#include "hearthray/patch_geometry.hpp"

#include <filesystem>
#include <ostream>

#include "core/text.hpp"
#include "hearthray/fields.hpp"
#include "hearthray/io.hpp"
#include "hearthray/vtu.hpp"
#include "outputs/atomic_file.hpp"

namespace hearthray {

PatchGeometry patch_geometry(const Scene& scene, const PatchSet& patches) {
  PatchGeometry g;
  g.centroid.resize(patches.size());
  g.normal.resize(patches.size());
  for (std::size_t p = 0; p < patches.size(); ++p) {
    Vec3 moment, area_normal;  // sum of area x centroid; sum of area x unit normal
    double area = 0;
    for (std::uint32_t k = patches.triangle_offset[p]; k < patches.triangle_offset[p + 1]; ++k) {
      const Triangle& tri = scene.triangles[patches.triangle_index[k]];
      const Vec3& a = scene.vertices[tri.v[0]];
      const Vec3& b = scene.vertices[tri.v[1]];
      const Vec3& c = scene.vertices[tri.v[2]];
      const Vec3 doubled = cross(b - a, c - a);  // twice the area times the unit normal
      const double doubled_area = norm(doubled);
      moment += (a + b + c) * (doubled_area / 6);
      area_normal += doubled * 0.5;
      area += doubled_area / 2;
    }
    if (patches.patches[p].side == Side::back) area_normal = -area_normal;
    g.centroid[p] = area > 0 ? moment / area : Vec3{};
    const double length = norm(area_normal);
    g.normal[p] = length > 0 ? area_normal / length : Vec3{};
  }
  return g;
}

void write_patches_csv(std::ostream& out, const Scene& scene, const PatchSet& patches) {
  const PatchGeometry g = patch_geometry(scene, patches);
  out << "patch,name,surface,surface_index,side,area_m2,centroid_x_m,centroid_y_m,centroid_z_m,"
         "normal_x,normal_y,normal_z,triangles\n";
  for (std::size_t p = 0; p < patches.size(); ++p) {
    const Patch& patch = patches.patches[p];
    out << p << ',' << csv_field(patch.name) << ',' << csv_field(scene.surfaces[patch.surface].name)
        << ',' << patch.surface << ',' << (patch.side == Side::back ? "back" : "front") << ','
        << shortest(patch.area);
    for (const Vec3* v : {&g.centroid[p], &g.normal[p]})
      for (int axis = 0; axis < 3; ++axis) out << ',' << shortest((*v)[axis]);
    out << ',' << patches.triangle_offset[p + 1] - patches.triangle_offset[p] << '\n';
  }
}

void write_patches_csv_file(const std::string& path, const Scene& scene, const PatchSet& patches) {
  write_stream_atomically(path, [&](std::ostream& out) { write_patches_csv(out, scene, patches); });
}

std::vector<std::string> write_patch_files_beside(const std::string& matrix_path,
                                                  const Scene& scene, const PatchSet& patches) {
  const std::filesystem::path matrix(matrix_path);
  const std::filesystem::path stem = matrix.parent_path() / matrix.stem();
  const std::string csv = stem.string() + ".patches.csv", vtu = stem.string() + ".patches.vtu";
  write_patches_csv_file(csv, scene, patches);
  write_vtu(vtu, scene, patches, {patch_area_field(patches)});
  return {csv, vtu};
}

}  // namespace hearthray
