// Patches: conforming subdivision, grouping by size, per-triangle patches, ray budgets.
#include <catch2/catch.hpp>

#include "hearthray/patches.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

double longest_edge(const Scene& scene, std::uint32_t t) {
  const Triangle& tri = scene.triangles[t];
  double best = 0;
  for (int k = 0; k < 3; ++k)
    best = std::max(best, norm(scene.vertices[tri.v[k]] - scene.vertices[tri.v[(k + 1) % 3]]));
  return best;
}

}  // namespace

TEST_CASE("subdivision splits long edges, keeps areas and stays conforming", "[patches]") {
  const Scene cube = load_obj_text(unit_cube_obj(), "cube");
  REQUIRE(analyse_topology(cube).closed);
  std::vector<PatchSpec> specs(cube.surfaces.size(), {PatchSpec::Mode::size, 0.3});
  specs[0] = {};  // the first face keeps its triangles unless a neighbour's split reaches it
  const Scene fine = subdivide(cube, specs);
  CHECK(fine.triangles.size() > cube.triangles.size() * 10);
  for (std::uint32_t s = 1; s < fine.surfaces.size(); ++s) {
    double area = 0;
    const Surface& surface = fine.surfaces[s];
    for (std::uint32_t t = surface.first_triangle;
         t < surface.first_triangle + surface.triangle_count; ++t) {
      CHECK(longest_edge(fine, t) <= 0.3 + 1e-12);
      CHECK(fine.triangles[t].surface == s);
      area += fine.triangle_area(t);
    }
    CHECK(area == Approx(1.0).epsilon(1e-12));
    // Normals keep their direction: every piece faces the way its face did.
    const Vec3 n = cube.normal(cube.surfaces[s].first_triangle);
    for (std::uint32_t t = surface.first_triangle;
         t < surface.first_triangle + surface.triangle_count; ++t)
      CHECK(dot(fine.normal(t), n) == Approx(1.0).margin(1e-12));
  }
  // Splitting an edge in every triangle that shares it leaves no T-junction: still closed.
  const MeshTopology topology = analyse_topology(fine);
  CHECK(topology.closed);
  CHECK(topology.boundary_edges == 0);
}

TEST_CASE("patches by size group triangles on a grid and keep the surface area", "[patches]") {
  const Scene square = load_obj_text(parallel_rectangles_obj(1, 1, 1), "plates");
  std::vector<PatchSpec> specs(square.surfaces.size(), {PatchSpec::Mode::size, 0.25});
  const Scene fine = subdivide(square, specs);
  const PatchSet patches = make_patches(fine, specs);
  // A 1 x 1 m plate on a 0.25 m grid: 16 cells, each holding pieces whose centroids fall in it.
  std::size_t lower = 0;
  double area = 0;
  for (const Patch& p : patches.patches)
    if (p.surface == 0) ++lower, area += p.area;
  CHECK(lower == 16);
  CHECK(area == Approx(1.0).epsilon(1e-12));
  CHECK(patches.patches[0].name == "lower#1");
  // Every triangle belongs to exactly one front patch; one-sided: no back patch.
  for (std::size_t t = 0; t < fine.triangles.size(); ++t) {
    CHECK(patches.front_patch_of_triangle[t] != PatchSet::kNoPatch);
    CHECK(patches.back_patch_of_triangle[t] == PatchSet::kNoPatch);
  }
}

TEST_CASE("one patch per triangle, two-sided surfaces get both sides", "[patches]") {
  Scene plates = load_obj_text(parallel_rectangles_obj(1, 2, 1), "plates");
  plates.surfaces[1].two_sided = true;
  std::vector<PatchSpec> specs(plates.surfaces.size(), {PatchSpec::Mode::per_triangle, 0});
  const PatchSet patches = make_patches(plates, specs);
  const std::size_t n0 = plates.surfaces[0].triangle_count, n1 = plates.surfaces[1].triangle_count;
  CHECK(patches.size() == n0 + 2 * n1);
  CHECK(patches.patches[n0].name == "upper#1 (front)");
  CHECK(patches.patches[n0 + n1].name == "upper#1 (back)");
}

TEST_CASE("a ray budget is spread by area with a floor", "[patches]") {
  const Scene plates = load_obj_text(box_obj(1, 2, 3), "box");
  const PatchSet patches = make_surface_patches(plates);
  const auto rays = rays_by_area(patches, 220000, 30000);
  double area = 0;
  for (const Patch& p : patches.patches) area += p.area;  // 22 m^2
  for (std::size_t i = 0; i < patches.size(); ++i) {
    const double share = 220000 * patches.patches[i].area / area;
    CHECK(rays[i] == std::max<std::uint64_t>(30000, std::uint64_t(std::llround(share))));
  }
}
