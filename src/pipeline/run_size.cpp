// How big a run will be, estimated from the mesh and the patch and ray settings before
// anything is subdivided, allocated or traced; runs past the limits are refused unless forced.
#include <algorithm>
#include <cmath>

#include "core/text.hpp"
#include "hearthray/pipeline.hpp"

namespace hearthray {

namespace {

// Refusal limits (our own round numbers): beyond them a run takes hours or tens of
// gigabytes on a workstation. scripts/bench measures the pipeline at 20k and 100k patches.
constexpr double kMaxPatches = 200e3;
constexpr double kMaxTriangles = 20e6;
constexpr double kMaxRays = 1e11;
// Rough costs for the message: bytes per triangle of a subdivided mesh (vertices, triangle,
// patch membership, Embree's BVH) and per view-factor matrix entry (value and column index).
constexpr double kBytesPerTriangle = 200;
constexpr double kBytesPerFactor = 12;
// A ray rate to turn rays into time in the message: an order of magnitude for a few cores,
// not a promise (scripts/bench measures the machine at hand).
constexpr double kRaysPerSecond = 10e6;

std::string duration_text(double seconds) {
  if (seconds < 120) return rounded("%.0f", seconds) + " s";
  if (seconds < 7200) return rounded("%.0f", seconds / 60) + " minutes";
  if (seconds < 2 * 86400) return rounded("%.0f", seconds / 3600) + " hours";
  if (seconds < 2 * 365.25 * 86400) return rounded("%.0f", seconds / 86400) + " days";
  return rounded("%.3g", seconds / (365.25 * 86400)) + " years";
}

std::string bytes_text(double bytes) {
  if (bytes < 1e9) return rounded("%.0f", bytes / 1e6) + " MB";
  return rounded("%.3g", bytes / 1e9) + " GB";
}

// Triangles of surface s after longest-edge bisection to edges of at most `size`: each
// triangle becomes about 2 (longest edge / size)^2 pieces.
double split_triangles(const Scene& scene, std::size_t s, double size) {
  const Surface& surface = scene.surfaces[s];
  double count = 0;
  for (std::uint32_t t = surface.first_triangle;
       t < surface.first_triangle + surface.triangle_count; ++t) {
    const auto& v = scene.triangles[t].v;
    double longest = 0;
    for (int k = 0; k < 3; ++k)
      longest = std::max(longest, norm(scene.vertices[v[(k + 1) % 3]] - scene.vertices[v[k]]));
    count += std::max(1.0, 2 * (longest / size) * (longest / size));
  }
  return count;
}

}  // namespace

RunSize estimate_run_size(const Scene& scene, const std::vector<PatchSpec>& specs,
                          const RayBudget& budget) {
  RunSize size;
  for (std::size_t s = 0; s < scene.surfaces.size() && s < specs.size(); ++s) {
    const Surface& surface = scene.surfaces[s];
    const double sides = surface.two_sided ? 2 : 1;
    const double triangles = surface.triangle_count;
    switch (specs[s].mode) {
      case PatchSpec::Mode::whole:
        size.patches += sides;
        size.triangles += triangles;
        break;
      case PatchSpec::Mode::per_triangle:
        size.patches += sides * triangles;
        size.triangles += triangles;
        break;
      case PatchSpec::Mode::size: {
        const double cell = specs[s].size;
        const double split = cell > 0 ? split_triangles(scene, s, cell) : INFINITY;
        size.triangles += split;
        size.patches += sides * std::min(split, std::max(1.0, surface.area / (cell * cell)));
        break;
      }
    }
  }
  size.rays = budget.total > 0
                  ? std::max(double(budget.total), size.patches * double(budget.min_per_patch))
                  : size.patches * double(budget.per_patch);
  size.memory_bytes =
      size.triangles * kBytesPerTriangle + size.patches * size.patches * kBytesPerFactor;
  size.seconds = size.rays / kRaysPerSecond;
  return size;
}

void check_run_size(const RunSize& size, const std::string& what) {
  std::string why;
  if (!(size.patches <= kMaxPatches)) {
    why = "about " + rounded("%.3g", size.patches) + " patches (more than " +
          rounded("%.0f", kMaxPatches) + "); their view-factor matrix alone may need up to " +
          bytes_text(size.patches * size.patches * kBytesPerFactor);
  } else if (!(size.triangles <= kMaxTriangles)) {
    why = "about " + rounded("%.3g", size.triangles) + " triangles once cut to the patch size " +
          "(more than " + rounded("%.3g", kMaxTriangles) + "), some " +
          bytes_text(size.triangles * kBytesPerTriangle);
  } else if (!(size.rays <= kMaxRays)) {
    why = "about " + rounded("%.3g", size.rays) + " rays (more than " + rounded("%.3g", kMaxRays) +
          "), some " + duration_text(size.seconds) + " at " +
          rounded("%.0f", kRaysPerSecond / 1e6) + " million rays per second";
  } else {
    return;
  }
  throw InputError(what + ": this run would have " + why +
                   ". Use fewer rays (--rays, [rays] per_patch or total) or larger patches "
                   "(patches = \"...\"), or give --force to run it anyway");
}

}  // namespace hearthray
