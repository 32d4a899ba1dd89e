// Per-patch view factors against Howell's element-to-rectangle closed forms. A patch's factor
// to a rectangle is the area average over the patch of the element factor, so the reference
// here is the catalogue formula (superposed at each point so the element's normal meets a
// corner) integrated over the patch's own triangles by a fine centroid rule. What is left is
// statistics: every patch within 4 standard errors plus the quadrature's own error, which the
// test estimates from two quadrature depths.
#include <catch2/catch.hpp>
#include <cmath>
#include <functional>

#include "hearthray/patches.hpp"
#include "hearthray/smoothing.hpp"
#include "hearthray/tracer.hpp"
#include "hearthray/view_factors.hpp"
#include "support/closed_forms.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

double patch_average(const Scene& scene, const PatchSet& patches, std::size_t p, int depth,
                     const std::function<double(const Vec3&)>& f) {
  double sum = 0, area = 0;
  for (std::uint32_t k = patches.triangle_offset[p]; k < patches.triangle_offset[p + 1]; ++k) {
    const std::uint32_t t = patches.triangle_index[k];
    const Triangle& tri = scene.triangles[t];
    const double a = scene.triangle_area(t);
    sum += a * triangle_average(scene.vertices[tri.v[0]], scene.vertices[tri.v[1]],
                                scene.vertices[tri.v[2]], depth, f);
    area += a;
  }
  return sum / area;
}

struct PatchCase {
  Scene scene;
  PatchSet patches;
  Tallies tallies;
  ViewFactors raw;
};

// Splits surface `split` into patches of `size`, the others whole, and traces.
PatchCase trace_patches(const std::string& obj, const std::string& split, double size,
                        std::uint64_t rays) {
  PatchCase c;
  const Scene base = load_obj_text(obj, "patch case");
  std::vector<PatchSpec> specs(base.surfaces.size());
  specs[base.find_surface(split)] = {PatchSpec::Mode::size, size};
  c.scene = subdivide(base, specs);
  c.patches = make_patches(c.scene, specs);
  const Tracer tracer(c.scene);
  ViewFactorOptions options;
  options.rays_per_patch = rays;
  options.seed = 20261201;
  c.tallies = trace_tallies(c.scene, c.patches, tracer, options);
  c.raw = raw_view_factors(c.patches, c.tallies);
  return c;
}

std::size_t find_patch(const PatchSet& patches, const std::string& name) {
  for (std::size_t i = 0; i < patches.size(); ++i)
    if (patches.patches[i].name == name) return i;
  throw std::out_of_range("no patch " + name);
}

// Checks every patch of surface `from` against its reference factor to patch `to`.
void check_patches(const PatchCase& c, std::uint32_t from, std::size_t to,
                   const std::function<double(const Vec3&)>& element_factor) {
  int checked = 0;
  double worst = 0;
  for (std::size_t p = 0; p < c.patches.size(); ++p) {
    if (c.patches.patches[p].surface != from) continue;
    const double fine = patch_average(c.scene, c.patches, p, 4, element_factor);
    const double coarse = patch_average(c.scene, c.patches, p, 3, element_factor);
    const double quadrature_error = std::fabs(fine - coarse);  // bounds the finer one's error
    const double f = c.raw.F.coeff(static_cast<Eigen::Index>(p), static_cast<Eigen::Index>(to));
    const double se = binomial_sd(fine, double(c.raw.rays[p]));
    INFO(c.patches.patches[p].name << ": traced " << f << ", reference " << fine << " +- "
                                   << quadrature_error << ", se " << se);
    CHECK(std::fabs(f - fine) <= 4 * se + quadrature_error);
    worst = std::max(worst, std::fabs(f - fine) / se);
    ++checked;
  }
  INFO("largest difference " << worst << " standard errors");
  CHECK(checked >= 16);
}

}  // namespace

TEST_CASE("patches of a plate see a parallel rectangle as the element formula says",
          "[validation][patches]") {
  // Plates 1 x 1 m, 0.5 m apart; the lower one in patches of 0.25 m. Reference: Howell B-3
  // (element to parallel rectangle, normal through a corner; number as recalled), superposed
  // over the four rectangles into which the element's foot point splits the upper plate.
  const double a = 1, b = 1, gap = 0.5;
  const PatchCase c = trace_patches(parallel_rectangles_obj(a, b, gap), "lower", 0.25, 60000);
  const std::size_t upper = find_patch(c.patches, "upper");
  auto element = [&](const Vec3& p) {
    double f = 0;
    for (double w : {p.x, a - p.x})
      for (double h : {p.y, b - p.y})
        if (w > 0 && h > 0) f += element_to_parallel_rectangle_corner(w, h, gap);
    return f;
  };
  check_patches(c, static_cast<std::uint32_t>(c.scene.find_surface("lower")), upper, element);
}

TEST_CASE("patches of a floor see a perpendicular wall as the element formula says",
          "[validation][patches]") {
  // Base l x w = 1 x 1 m in z = 0, wall l x h = 1 x 0.6 m in y = 0, sharing the x axis; the
  // base in patches of 0.25 m. Reference: the element-to-perpendicular-rectangle formula of
  // Howell's catalogue section B (entry number not recalled), superposed over the two parts
  // into which the element's foot point on the wall's bottom edge splits the wall.
  const double l = 1, w = 1, h = 0.6;
  const PatchCase c = trace_patches(perpendicular_rectangles_obj(l, w, h), "base", 0.25, 60000);
  const std::size_t wall = find_patch(c.patches, "wall");
  auto element = [&](const Vec3& p) {
    double f = 0;
    for (double part : {p.x, l - p.x})
      if (part > 0 && p.y > 0) f += element_to_perpendicular_rectangle_corner(h, part, p.y);
    return f;
  };
  check_patches(c, static_cast<std::uint32_t>(c.scene.find_surface("base")), wall, element);
}

TEST_CASE("patch results sum to the surface-level factors", "[validation][patches]") {
  // Sum over the patches p of a surface of A_p F_pq equals A_s F_sq: the exchange area of the
  // whole surface (additivity of exchange areas; Siegel & Howell, the summation rules). The
  // patch run and a surface-level run are independent estimates of the same factor, so they
  // agree within 4 combined standard errors.
  const std::string obj = parallel_rectangles_obj(1, 1, 0.5);
  const PatchCase fine = trace_patches(obj, "lower", 0.2, 40000);
  const PatchCase whole = trace_patches(obj, "upper", 1e9, 400000);  // lower stays one patch
  const std::size_t upper_fine = find_patch(fine.patches, "upper");
  double exchange = 0, area = 0, variance = 0;
  for (std::size_t p = 0; p < fine.patches.size(); ++p) {
    if (fine.patches.patches[p].name.rfind("lower", 0) != 0) continue;
    const double ap = fine.patches.patches[p].area;
    const double f = fine.raw.F.coeff(Eigen::Index(p), Eigen::Index(upper_fine));
    exchange += ap * f;
    area += ap;
    variance += ap * ap * f * (1 - f) / double(fine.raw.rays[p]);
  }
  CHECK(area == Approx(1.0).epsilon(1e-12));
  const std::size_t lower = find_patch(whole.patches, "lower");
  const std::size_t upper = find_patch(whole.patches, "upper");
  const double f_whole = whole.raw.F.coeff(Eigen::Index(lower), Eigen::Index(upper));
  variance += f_whole * (1 - f_whole) / double(whole.raw.rays[lower]);
  CHECK(std::fabs(exchange / area - f_whole) < 4 * std::sqrt(variance));
  // And both match Howell C-11 (aligned parallel rectangles).
  const double exact = parallel_rectangles_aligned(1, 1, 0.5);
  CHECK(std::fabs(f_whole - exact) < 4 * binomial_sd(exact, double(whole.raw.rays[lower])));
}
