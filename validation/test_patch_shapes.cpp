// How the shape of patches affects their factors: two parallel 1 x 0.8 m plates 0.5 m apart,
// their corner at (0.13, 0.06) m (off the origin, as a part of a model is), both cut into
// patches of 0.25 m, in two layouts:
//  - grid cells: the plates cut along a 4 x 3 grid (subdivide + make_patches), every patch an
//    exact 0.25 x 0.267 m rectangle, so every patch-to-patch factor has a closed form: the
//    exchange area
//    of parallel rectangles in general position (the 16-term corner sum given by Siegel &
//    Howell, recalled, tests/support/closed_forms.hpp), which for a cell and the cell facing it
//    is Howell's C-11;
//  - centroid grid: the layout used before compact patches, rebuilt here as the baseline:
//    triangles bisected to the patch size and grouped by the cell of a 0.25 m grid their
//    centroid falls in, a grid fixed to the model's origin, which gives saw-tooth patches
//    and narrow ones along the plates' edges. Their factors have no closed form; the
//    reference is Lambert's contour formula for an element and each receiving triangle
//    (Hottel & Sarofim; Siegel & Howell), averaged over the emitting patch by a centroid rule
//    whose own error is taken as the change from one depth less.
// The test checks every patch pair of both layouts against its reference within 4 sd plus
// the quadrature error, that the errors match their standard deviations in both layouts (the
// shape changes nothing in the statistics: a patch's factor is a binomial proportion either
// way), and that grid cells are more compact and all of one size. Run with -s to see the
// figures.
// A third case cuts a door out of the lower plate: its grid cells are clipped to it (slivers
// joined to neighbours), against the compact regions grown over such a plate before; both are
// judged by the contour quadrature.
#include <catch2/catch.hpp>
#include <cmath>
#include <functional>
#include <map>
#include <sstream>
#include <tuple>

#include "hearthray/patches.hpp"
#include "hearthray/statistics.hpp"
#include "hearthray/tracer.hpp"
#include "hearthray/view_factors.hpp"
#include "patches/regions.hpp"
#include "support/closed_forms.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

constexpr double kA = 1.0, kB = 0.8, kX0 = 0.13, kY0 = 0.06, kGap = 0.5, kSize = 0.25;
constexpr std::uint64_t kRays = 40000;

// The two plates: "lower" in z = 0 facing +z, "upper" in z = kGap facing -z, two triangles
// each.
Scene plates() {
  std::ostringstream obj;
  obj.precision(17);
  const double x1 = kX0 + kA, y1 = kY0 + kB;
  obj << "g lower\nv " << kX0 << " " << kY0 << " 0\nv " << x1 << " " << kY0 << " 0\nv " << x1 << " "
      << y1 << " 0\nv " << kX0 << " " << y1 << " 0\nf 1 2 3 4\n";
  obj << "g upper\nv " << kX0 << " " << kY0 << " " << kGap << "\nv " << kX0 << " " << y1 << " "
      << kGap << "\nv " << x1 << " " << y1 << " " << kGap << "\nv " << x1 << " " << kY0 << " "
      << kGap << "\nf 5 6 7 8\n";
  return load_obj_text(obj.str(), "plates");
}

struct Layout {
  Scene scene;
  PatchSet patches;
};

// The lower plate with a door of 0.24 x 0.5 m cut out of its edge at x = 0.42 .. 0.66 m from
// its corner (one polygon, cut into triangles by the loader); the upper plate whole.
Scene plates_with_door() {
  std::ostringstream obj;
  obj.precision(17);
  const double x1 = kX0 + kA, y1 = kY0 + kB, d0 = kX0 + 0.42, d1 = kX0 + 0.66, dh = kY0 + 0.5;
  const double lower[][2] = {{kX0, kY0}, {d0, kY0}, {d0, dh}, {d1, dh},
                             {d1, kY0},  {x1, kY0}, {x1, y1}, {kX0, y1}};
  obj << "g lower\n";
  for (const auto& p : lower) obj << "v " << p[0] << " " << p[1] << " 0\n";
  obj << "f 1 2 3 4 5 6 7 8\n";
  obj << "g upper\nv " << kX0 << " " << kY0 << " " << kGap << "\nv " << kX0 << " " << y1 << " "
      << kGap << "\nv " << x1 << " " << y1 << " " << kGap << "\nv " << x1 << " " << kY0 << " "
      << kGap << "\nf 9 10 11 12\n";
  return load_obj_text(obj.str(), "plates with a door");
}

// A layout from the triangles of each patch, surface by surface (one-sided surfaces).
Layout from_groups(Scene scene, const std::vector<std::vector<std::vector<std::uint32_t>>>& by) {
  Layout l;
  l.scene = std::move(scene);
  PatchSet& set = l.patches;
  set.front_patch_of_triangle.assign(l.scene.triangles.size(), PatchSet::kNoPatch);
  set.back_patch_of_triangle.assign(l.scene.triangles.size(), PatchSet::kNoPatch);
  set.triangle_offset.push_back(0);
  for (std::uint32_t s = 0; s < by.size(); ++s)
    for (const auto& group : by[s]) {
      Patch patch;
      patch.surface = s;
      patch.piece = static_cast<std::uint32_t>(set.patches.size());
      patch.name = l.scene.surfaces[s].name + "#" + std::to_string(patch.piece);
      for (std::uint32_t t : group) {
        patch.area += l.scene.triangle_area(t);
        set.triangle_index.push_back(t);
        set.front_patch_of_triangle[t] = static_cast<std::uint32_t>(set.patches.size());
      }
      set.triangle_offset.push_back(static_cast<std::uint32_t>(set.triangle_index.size()));
      set.patches.push_back(patch);
    }
  return l;
}

// The layout of a non-rectangular plate before clipped cells: its triangles bisected to half
// the patch size and grouped into round(area / size^2) regions grown over them (the same
// grow_regions as curved charts use); the upper plate cut along its grid as now.
Layout grown_regions(const Scene& base) {
  const Scene halves = split_long_edges(base, {0.5 * kSize, INFINITY});
  const std::vector<PatchSpec> specs{{}, {PatchSpec::Mode::size, kSize}};
  Scene scene = subdivide(halves, specs);
  const PatchSet upper = make_patches(scene, specs);
  std::vector<std::vector<std::vector<std::uint32_t>>> by(2);
  for (std::size_t p = 1; p < upper.size(); ++p)
    by[1].emplace_back(upper.triangle_index.begin() + upper.triangle_offset[p],
                       upper.triangle_index.begin() + upper.triangle_offset[p + 1]);
  const std::vector<std::uint32_t> weld = patch_layout::weld_ids(scene.vertices);
  std::vector<patch_layout::Chart> charts = patch_layout::lay_out(scene, 0, kSize, weld);
  REQUIRE(charts.size() == 1);
  patch_layout::Chart& chart = charts[0];
  chart.kind = patch_layout::ChartKind::regions;
  chart.regions = int(std::lround(chart.area / (kSize * kSize)));
  const std::vector<std::uint32_t> region = patch_layout::grow_regions(scene, chart, weld);
  by[0].resize(std::size_t(chart.regions));
  for (std::size_t k = 0; k < region.size(); ++k) by[0][region[k]].push_back(chart.triangles[k]);
  return from_groups(std::move(scene), by);
}

Layout grid_cells(const Scene& base) {
  const std::vector<PatchSpec> specs(base.surfaces.size(), {PatchSpec::Mode::size, kSize});
  Layout l;
  l.scene = subdivide(base, specs);
  l.patches = make_patches(l.scene, specs);
  return l;
}

// The grouping before compact patches (one-sided surfaces): bisection to the patch size, then
// the triangles of each surface grouped by the grid cell of their centroid.
Layout centroid_grid(const Scene& base) {
  Scene scene = split_long_edges(base, std::vector<double>(base.surfaces.size(), kSize));
  std::vector<std::vector<std::vector<std::uint32_t>>> by(scene.surfaces.size());
  for (std::uint32_t s = 0; s < scene.surfaces.size(); ++s) {
    const Surface& surface = scene.surfaces[s];
    std::map<std::tuple<long, long, long>, std::size_t> cell_group;
    for (std::uint32_t t = surface.first_triangle;
         t < surface.first_triangle + surface.triangle_count; ++t) {
      const Triangle& tri = scene.triangles[t];
      const Vec3 c =
          (scene.vertices[tri.v[0]] + scene.vertices[tri.v[1]] + scene.vertices[tri.v[2]]) /
          (3.0 * kSize);
      const auto key = std::make_tuple(std::lround(std::floor(c.x)), std::lround(std::floor(c.y)),
                                       std::lround(std::floor(c.z)));
      const auto [it, inserted] = cell_group.emplace(key, by[s].size());
      if (inserted) by[s].emplace_back();
      by[s][it->second].push_back(t);
    }
  }
  return from_groups(std::move(scene), by);
}

std::vector<std::uint32_t> triangles_of(const Layout& l, std::size_t p) {
  return {l.patches.triangle_index.begin() + l.patches.triangle_offset[p],
          l.patches.triangle_index.begin() + l.patches.triangle_offset[p + 1]};
}

// Area average over patch p of f, by the centroid rule at `depth` on each triangle.
double patch_average(const Layout& l, std::size_t p, int depth,
                     const std::function<double(const Vec3&)>& f) {
  double sum = 0;
  for (std::uint32_t t : triangles_of(l, p)) {
    const Triangle& tri = l.scene.triangles[t];
    sum += l.scene.triangle_area(t) * triangle_average(l.scene.vertices[tri.v[0]],
                                                       l.scene.vertices[tri.v[1]],
                                                       l.scene.vertices[tri.v[2]], depth, f);
  }
  return sum / l.patches.patches[p].area;
}

// Factor from the element at x (normal +z) to patch q, by the contour formula per triangle.
double element_to_patch(const Layout& l, std::size_t q, const Vec3& x) {
  double f = 0;
  for (std::uint32_t t : triangles_of(l, q)) {
    const Triangle& tri = l.scene.triangles[t];
    f += element_to_polygon(
        x, {0, 0, 1},
        {l.scene.vertices[tri.v[0]], l.scene.vertices[tri.v[1]], l.scene.vertices[tri.v[2]]});
  }
  return f;
}

// The axis-aligned box of patch p's vertices (the patch itself when it is a grid cell).
Rect box_of(const Layout& l, std::size_t p) {
  Rect r{INFINITY, -INFINITY, INFINITY, -INFINITY};
  for (std::uint32_t t : triangles_of(l, p))
    for (std::uint32_t v : l.scene.triangles[t].v) {
      const Vec3& x = l.scene.vertices[v];
      r.x0 = std::min(r.x0, x.x), r.x1 = std::max(r.x1, x.x);
      r.y0 = std::min(r.y0, x.y), r.y1 = std::max(r.y1, x.y);
    }
  return r;
}

struct Figures {
  int pairs = 0;
  double mean_z2 = 0;       // mean of ((F - F_ref) / sd)^2, sd from the reference
  double max_z = 0;         // largest |F - F_ref| / sd
  double rms_reported = 0;  // RMS of (F - F_ref) / the standard error the tool reports
  double quadrature = 0;    // largest quadrature error of a reference
  double spread = 0;        // mean over the lower patches of the relative RMS spread of the
                            // point factor to the whole upper plate over the patch
  double compactness = 0;   // mean polar moment over area squared (a square: 1/6)
  double area_ratio = 0;    // largest over smallest lower patch
};

// Spread of the element factor to the upper plate over patch p, relative to its mean, and the
// patch's polar moment over its area squared, both by the centroid rule.
std::pair<double, double> shape_of(const Layout& l, std::size_t p) {
  auto to_plate = [](const Vec3& x) {
    double f = 0;
    for (double w : {x.x - kX0, kX0 + kA - x.x})
      for (double h : {x.y - kY0, kY0 + kB - x.y})
        if (w > 0 && h > 0) f += element_to_parallel_rectangle_corner(w, h, kGap);
    return f;
  };
  const double mean = patch_average(l, p, 4, to_plate);
  const double square = patch_average(l, p, 4, [&](const Vec3& x) {
    const double d = to_plate(x) - mean;
    return d * d;
  });
  // Polar moment about the patch's centroid, exactly: a triangle of area A and centroid g has
  // A (|g - c|^2 + sum_i |v_i - g|^2 / 12) (its second moment, elementary integration).
  const Vec3 centre{patch_average(l, p, 0, [](const Vec3& x) { return x.x; }),
                    patch_average(l, p, 0, [](const Vec3& x) { return x.y; }), 0};
  double polar = 0;
  for (std::uint32_t t : triangles_of(l, p)) {
    const Triangle& tri = l.scene.triangles[t];
    const Vec3 g =
        (l.scene.vertices[tri.v[0]] + l.scene.vertices[tri.v[1]] + l.scene.vertices[tri.v[2]]) /
        3.0;
    double own = 0;
    for (std::uint32_t v : tri.v) own += dot(l.scene.vertices[v] - g, l.scene.vertices[v] - g);
    polar += l.scene.triangle_area(t) * (dot(g - centre, g - centre) + own / 12);
  }
  const double area = l.patches.patches[p].area;
  return {std::sqrt(square) / mean, polar / (area * area)};
}

// Traces the layout with `sampler` and compares every lower -> upper patch pair with its
// reference: the closed form when `exact`, else the contour quadrature.
Figures compare(const Layout& l, EmissionSampler sampler, bool exact) {
  const Tracer tracer(l.scene);
  ViewFactorOptions options;
  options.rays_per_patch = kRays;
  options.seed = 20261202;
  options.sampler = sampler;
  const ViewFactors raw =
      raw_view_factors(l.patches, trace_tallies(l.scene, l.patches, tracer, options));
  Figures fig;
  int lower = 0;
  double smallest = INFINITY, largest = 0;
  for (std::size_t p = 0; p < l.patches.size(); ++p) {
    if (l.patches.patches[p].surface != 0) continue;  // "lower" emits
    ++lower;
    smallest = std::min(smallest, l.patches.patches[p].area);
    largest = std::max(largest, l.patches.patches[p].area);
    const auto [spread, compact] = shape_of(l, p);
    fig.spread += spread;
    fig.compactness += compact;
    for (std::size_t q = 0; q < l.patches.size(); ++q) {
      if (l.patches.patches[q].surface != 1) continue;
      double ref = 0, quadrature = 0;
      if (exact) {
        ref = parallel_rectangles_exchange_area(box_of(l, p), box_of(l, q), kGap) /
              l.patches.patches[p].area;
      } else {
        auto f = [&](const Vec3& x) { return element_to_patch(l, q, x); };
        ref = patch_average(l, p, 3, f);
        quadrature = std::fabs(ref - patch_average(l, p, 2, f));
      }
      const double traced = raw.F.coeff(Eigen::Index(p), Eigen::Index(q));
      const double sd = binomial_sd(ref, double(kRays));
      INFO(l.patches.patches[p].name << " -> " << l.patches.patches[q].name << ": traced " << traced
                                     << ", reference " << ref << " +- " << quadrature << ", sd "
                                     << sd);
      CHECK(std::fabs(traced - ref) <= 4 * sd + quadrature);
      const double z = (traced - ref) / sd;
      fig.mean_z2 += z * z;
      fig.max_z = std::max(fig.max_z, std::fabs(z));
      const double reported = raw.standard_error(p, traced);
      fig.rms_reported += std::pow((traced - ref) / reported, 2);
      fig.quadrature = std::max(fig.quadrature, quadrature);
      ++fig.pairs;
    }
  }
  fig.mean_z2 /= fig.pairs;
  fig.rms_reported = std::sqrt(fig.rms_reported / fig.pairs);
  fig.spread /= lower;
  fig.compactness /= lower;
  fig.area_ratio = largest / smallest;
  return fig;
}

void show(const char* what, const Figures& f) {
  INFO(what << ": " << f.pairs << " pairs, mean z^2 " << f.mean_z2 << ", max |z| " << f.max_z
            << ", RMS error / reported se " << f.rms_reported << ", quadrature error "
            << f.quadrature << ", factor spread over a patch " << f.spread
            << ", polar moment / area^2 " << f.compactness << ", largest / smallest area "
            << f.area_ratio);
  CHECK(f.pairs > 0);
}

}  // namespace

TEST_CASE("grid cells of parallel plates: patch-to-patch factors against the closed form",
          "[validation][patches]") {
  const Layout cells = grid_cells(plates());
  // 4 x 3 cells a side, each an exact rectangle of 0.25 x 0.8 / 3 m: its box has the cell's
  // area and so has the patch (elementary geometry).
  REQUIRE(cells.patches.size() == 24);
  const double cell = kSize * kB / 3;
  for (std::size_t p = 0; p < cells.patches.size(); ++p) {
    REQUIRE(box_of(cells, p).area() == Approx(cell).epsilon(1e-12));
    REQUIRE(cells.patches.patches[p].area == Approx(cell).epsilon(1e-12));
  }
  // The closed form against the quadrature used for the saw-tooth layout, on the cells: the
  // quadrature's error at depth 3 is within its estimate there (the change from depth 2), so
  // the two layouts are judged alike.
  for (std::size_t q : {12u, 17u, 23u}) {
    const double exact =
        parallel_rectangles_exchange_area(box_of(cells, 0), box_of(cells, q), kGap) / cell;
    auto f = [&](const Vec3& x) { return element_to_patch(cells, q, x); };
    const double fine = patch_average(cells, 0, 3, f), coarse = patch_average(cells, 0, 2, f);
    CHECK(std::fabs(fine - exact) <= std::fabs(fine - coarse));
  }
  // Stratified sampling: plain Monte Carlo, errors of binomial size.
  const Figures f = compare(cells, EmissionSampler::stratified, true);
  show("grid cells, stratified", f);
  // 144 pairs (12 rows of 12 correlated entries): the mean of z^2 is 1 with a spread of
  // about 0.15; 0.5 .. 1.6 leaves room for chance, not for a biased or mis-scaled estimate.
  CHECK(f.mean_z2 > 0.5);
  CHECK(f.mean_z2 < 1.6);
  CHECK(f.rms_reported == Approx(std::sqrt(f.mean_z2)).epsilon(0.05));
  // The default sampler: its reported errors (from the replicates' spread) are of the size of
  // its errors (the RMS of error over reported error was 1.19 at this seed).
  const Figures s = compare(cells, EmissionSampler::sobol, true);
  show("grid cells, sobol", s);
  CHECK(s.rms_reported < 1.6);
  CHECK(s.mean_z2 < f.mean_z2);  // randomised QMC beats plain MC on smooth integrands
}

TEST_CASE("grid cells are not worse than the saw-tooth grouping they replace",
          "[validation][patches]") {
  const Scene base = plates();
  const Layout cells = grid_cells(base), teeth = centroid_grid(base);
  const Figures c = compare(cells, EmissionSampler::stratified, true);
  const Figures t = compare(teeth, EmissionSampler::stratified, false);
  show("grid cells", c);
  show("centroid grid (saw-tooth)", t);
  // The statistics do not depend on the shape: both layouts' errors match their sd.
  CHECK(t.mean_z2 > 0.5);
  CHECK(t.mean_z2 < 1.6);
  // Shape: an a x b rectangle has polar moment / area^2 = (a^2 + b^2) / (12 a b) (elementary
  // geometry); the saw-tooth patches have more, and their areas differ (narrow patches along
  // the edges), where the cells' are all equal. (The spread of the point factor over a patch
  // is shown, not compared: the saw-tooth layout cuts a plate into 20 patches against 12, so
  // its smaller patches spread less.)
  const double a = kSize, b = kB / 3;
  CHECK(c.compactness == Approx((a * a + b * b) / (12 * a * b)).epsilon(1e-9));
  CHECK(c.area_ratio == Approx(1).epsilon(1e-12));
  CHECK(t.compactness > c.compactness);
  CHECK(t.area_ratio > 2);
}

TEST_CASE("grid cells clipped to a plate with a door are not worse than grown regions",
          "[validation][patches]") {
  const Scene base = plates_with_door();
  const Layout clipped = grid_cells(base), regions = grown_regions(base);
  // The upper plate is the same 4 x 3 grid in both; the lower plate (0.68 m^2) gets
  // round(0.68 / 0.0625) = 11 grown regions, or its 4 x 3 cells clipped to it: 12 pieces, two
  // of them under half a cell (the 0.09 m wide strips beside the door) joined to a neighbour.
  int lower_clipped = 0, lower_regions = 0;
  for (const Patch& p : clipped.patches.patches) lower_clipped += p.surface == 0;
  for (const Patch& p : regions.patches.patches) lower_regions += p.surface == 0;
  CHECK(lower_regions == 11);
  CHECK(lower_clipped == 10);
  const Figures c = compare(clipped, EmissionSampler::stratified, false);
  const Figures r = compare(regions, EmissionSampler::stratified, false);
  show("clipped grid cells", c);
  show("grown regions", r);
  // Both layouts' errors are of binomial size (see above): the shape leaves the statistics
  // alone, so clipped cells are not worse per patch.
  CHECK(c.mean_z2 > 0.5);
  CHECK(c.mean_z2 < 1.6);
  CHECK(r.mean_z2 > 0.5);
  CHECK(r.mean_z2 < 1.6);
  // Shape: the clipped cells are more compact on average than the grown regions (polar
  // moment / area^2 0.175 against 0.193 at this size; a square has 1/6), though of less even
  // size (largest / smallest area 2.1 against 1.9: cells beside the door keep part of a
  // cell, a cell that took a sliver is larger). Run with -s for the figures.
  CHECK(c.compactness < r.compactness);
  CHECK(c.area_ratio < 2.5);
}
