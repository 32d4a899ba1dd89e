// Patches: the units that emit and receive rays and appear as rows and columns of the
// view-factor matrix. A patch is a set of triangles of one surface seen from one side. By
// default every surface side is one patch (a two-sided surface gives a front and a back
// patch); finer patches come from cutting the surface (`subdivide`) and laying its pieces out
// by their shape: grids on rectangles, bands and sectors on cylinders, compact regions
// elsewhere (`make_patches`), or one patch per triangle.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "hearthray/defaults.hpp"
#include "hearthray/scene.hpp"

namespace hearthray {

enum class Side : std::uint8_t { front, back };

struct Patch {
  std::string name;  // surface name; "name (front)" / "name (back)" when two-sided;
                     // "name#k" (k = 1, 2, ...) for the k-th patch of a split surface
  std::uint32_t surface = 0;
  std::uint32_t piece = 0;  // which piece of its surface (front and back of a piece share it)
  Side side = Side::front;
  double area = 0;  // m^2
};

struct PatchSet {
  std::vector<Patch> patches;
  // Triangles of patch p: triangle_index[triangle_offset[p] .. triangle_offset[p+1]).
  std::vector<std::uint32_t> triangle_offset;
  std::vector<std::uint32_t> triangle_index;
  // Patch that receives a ray arriving at the front / back of each triangle; kNoPatch for the
  // back of a one-sided surface (such a hit is counted as a back-face hit).
  std::vector<std::uint32_t> front_patch_of_triangle;
  std::vector<std::uint32_t> back_patch_of_triangle;

  static constexpr std::uint32_t kNoPatch = 0xffffffffu;
  std::size_t size() const { return patches.size(); }
};

// One patch per surface side, in surface order (front before back).
PatchSet make_surface_patches(const Scene& scene);

// How a surface is cut into patches: whole, one per mesh triangle, or pieces of about `size`
// metres (the surface is cut for them first, see `subdivide`).
struct PatchSpec {
  enum class Mode { whole, per_triangle, size } mode = Mode::whole;
  double size = 0;  // m, for Mode::size
};

// Cuts the surfaces whose spec has a size for their patches (see make_patches). Each such
// surface falls into charts, edge-connected pieces bending by less than 40 degrees between
// neighbouring triangles; a planar chart filling a rectangle is cut along the lines of a grid
// of near-square cells aligned with its edges, a cylinder along planes across its axis into
// bands of equal height, and a chart of any other shape has its triangles split (longest-edge
// bisection) to half the patch size. Every split edge is split in every triangle that shares
// it (vertices welded by position), so the mesh stays conforming: no T-junctions, no cracks.
// `specs` has one entry per surface. Surfaces, names, areas and normals are unchanged.
Scene subdivide(const Scene& scene, const std::vector<PatchSpec>& specs);

// Longest-edge bisection alone: splits every triangle of surface s whose longest edge exceeds
// limit[s] (INFINITY: none) until none does, conforming as above.
Scene split_long_edges(const Scene& scene, const std::vector<double>& limit);

// Patches by spec, per surface side, in surface order (front before back). Mode::size lays
// each chart of the surface out by its shape: a rectangle as a grid of cells of about `size`
// (nu x nv equal rectangles aligned with its edges), a cylinder (facets tangent to one circle)
// as bands along its axis times sectors around it, a chart of other shape as compact regions
// of about size^2 grown over its triangles, and a chart under a quarter of size^2 whole,
// sharing a cell of a grid of `size` with the other small charts of its surface. Run
// `subdivide` first, so that patch boundaries are straight and follow the grid.
PatchSet make_patches(const Scene& scene, const std::vector<PatchSpec>& specs);

// Rays per patch from a total budget spread in proportion to area, with a floor per patch.
std::vector<std::uint64_t> rays_by_area(const PatchSet& patches, std::uint64_t total,
                                        std::uint64_t floor);

// How many rays each patch emits.
struct RayBudget {
  std::uint64_t per_patch = kDefaultRaysPerPatch;  // every patch, unless `total` is given
  std::uint64_t total = 0;  // when not 0: spread over the patches by area (rays_by_area)
  std::uint64_t min_per_patch = kDefaultMinRaysPerPatch;  // floor per patch with `total`
};

// The scene as it is traced: surfaces cut into patches by `specs` (one per surface; triangles
// longer than a surface's patch size split first), and the rays of every patch.
struct PatchPlan {
  Scene scene;  // the input scene, or its subdivision when a spec has a size
  PatchSet patches;
  std::vector<PatchSpec> specs;     // per surface
  std::vector<std::uint64_t> rays;  // per patch
};
PatchPlan plan_patches(const Scene& scene, std::vector<PatchSpec> specs, const RayBudget& budget);

}  // namespace hearthray
