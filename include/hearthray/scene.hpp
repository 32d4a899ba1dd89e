// Scene: the surfaces of an OBJ mesh, in metres. Surfaces are the OBJ groups/objects (or the
// materials, on request); every polygon is triangulated; degenerate triangles are dropped with
// a warning naming their surface. Triangles are stored grouped by surface.
#pragma once

#include <array>
#include <cstdint>
#include <iosfwd>
#include <string>
#include <vector>

#include "hearthray/geometry.hpp"
#include "hearthray/units.hpp"

namespace hearthray {

struct Triangle {
  std::array<std::uint32_t, 3> v{};  // vertex indices; front side is counter-clockwise
  std::uint32_t surface = 0;         // index into Scene::surfaces
};

struct Surface {
  std::string name;
  bool two_sided = false;            // emits and receives on both sides (two result entries)
  double area = 0;                   // m^2 (one side)
  std::uint32_t first_triangle = 0;  // triangles [first_triangle, first_triangle + triangle_count)
  std::uint32_t triangle_count = 0;
  std::uint32_t dropped_degenerate = 0;  // triangles dropped for zero area
};

enum class SurfacesFrom { groups, materials };

struct MeshOptions {
  LengthUnit unit = LengthUnit::m;  // unit of the OBJ coordinates
  SurfacesFrom surfaces_from = SurfacesFrom::groups;
  // A triangle is degenerate when its area is below this fraction of the squared bounding-box
  // diagonal (scale-free, so the same mesh in mm or km drops the same triangles).
  double degenerate_relative_area = 1e-14;
};

struct Scene {
  std::string source;                 // file the mesh came from ("<memory>" for streams)
  std::vector<Vec3> vertices;         // metres
  std::vector<Triangle> triangles;    // grouped by surface, in surface order
  std::vector<Surface> surfaces;      // in order of first appearance in the file
  std::vector<std::string> warnings;  // e.g. dropped degenerate triangles, per surface
  Box3 bounds;                        // of the vertices used by triangles

  // Index of the surface with this name, or -1.
  int find_surface(const std::string& name) const;
  // Unit normal and area of triangle t.
  Vec3 normal(std::uint32_t t) const;
  double triangle_area(std::uint32_t t) const;
  std::vector<std::string> surface_names() const;
};

// The span of model sizes (bounding-box diagonal, metres) a mesh may have: outside it the
// tracing loses precision and a mesh is refused with a message about its unit.
inline constexpr double kMinModelSize_m = 1e-4;
inline constexpr double kMaxModelSize_m = 1e6;

// Reads an OBJ file. Throws InputError for a missing or unreadable file, NaN/inf coordinates,
// out-of-range indices, or a mesh with no usable triangle.
Scene load_obj(const std::string& path, const MeshOptions& options = {});
// The same from a stream (tests, generated meshes); `name` is used in messages.
Scene load_obj(std::istream& in, const std::string& name, const MeshOptions& options = {});

// Topology report used by `check` and to decide whether escaping rays are leaks.
struct MeshTopology {
  bool closed = false;                  // every edge (vertices welded by position) has 2 faces
  bool one_sided_closed = false;        // the same for one-sided surfaces alone: an enclosure
                                        // that may hold two-sided sheets
  std::size_t boundary_edges = 0;       // edges with one face
  std::size_t nonmanifold_edges = 0;    // edges with more than two faces
  std::size_t duplicate_triangles = 0;  // same three positions as an earlier triangle
};
MeshTopology analyse_topology(const Scene& scene);

}  // namespace hearthray
