// Charts of a surface and their layout by shape (see layout.hpp).
#include "patches/layout.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <numeric>

#include "hearthray/units.hpp"
#include "mesh/topology.hpp"
#include "patches/clipped.hpp"
#include "patches/regions.hpp"

namespace hearthray::patch_layout {

namespace {

// Neighbouring triangles bending by less than this belong to one chart.
const double kSmoothCos = std::cos(40.0 * kPi / 180.0);
// Normals this close (1 - cos, about 1.4e-4 rad) count as parallel: one plane, one facet.
constexpr double kParallel = 1e-8;
// A chart fills its bounding rectangle when the areas agree to this fraction.
constexpr double kRectangleArea = 1e-6;
// Facets of a cylinder are tangent to its circle within this fraction of the radius.
constexpr double kCylinderFit = 0.02;
// Vertices this close to a cut plane (as a fraction of the chart's size) lie on it.
constexpr double kOnPlane = 1e-7;
// Normal angles closer than this (rad) belong to one facet of a cylinder.
constexpr double kFacetAngle = 1e-3;

// Counts of cells, bands, sectors or regions: x rounded, at least 1 (also for NaN), at most
// kMaxCount (a run that large is refused before, by its size estimate, unless forced).
constexpr int kMaxCount = 1 << 20;
// Halves round up, and so do values within 1e-4 below a half, so that a length that is an
// exact 1.5 cells in the drawing but 1.49998 after the rounding of a mesh's coordinates (or of
// an axis fitted to them) gets the same count as its twin elsewhere in the model.
int how_many(double x) {
  const double n = std::floor(x + 0.5 + 1e-4);
  return !(n > 1) ? 1 : static_cast<int>(std::min(n, double(kMaxCount)));
}

// Edge-connected pieces of surface s that bend by less than 40 degrees between neighbours.
std::vector<std::vector<std::uint32_t>> segment(const Scene& scene, std::uint32_t s,
                                                const std::vector<std::uint32_t>& weld) {
  const Surface& surface = scene.surfaces[s];
  const std::uint32_t t0 = surface.first_triangle, n = surface.triangle_count;
  std::vector<std::uint32_t> all(n);
  std::iota(all.begin(), all.end(), t0);
  UnionFind sets(n);
  const auto edges = sorted_edges(scene, all, weld);
  for_each_edge(edges, [&](std::size_t first, std::size_t last) {
    if (last - first != 2) return;  // boundary or non-manifold: no join
    const std::uint32_t u = all[edges[first].second / 3], v = all[edges[first + 1].second / 3];
    if (dot(scene.normal(u), scene.normal(v)) >= kSmoothCos) sets.unite(u - t0, v - t0);
  });
  std::vector<std::vector<std::uint32_t>> charts;
  std::vector<std::int64_t> chart_of_root(n, -1);
  for (std::uint32_t i = 0; i < n; ++i) {
    const std::uint32_t root = sets.find(i);
    if (chart_of_root[root] < 0) {
      chart_of_root[root] = static_cast<std::int64_t>(charts.size());
      charts.emplace_back();
    }
    charts[static_cast<std::size_t>(chart_of_root[root])].push_back(t0 + i);
  }
  return charts;
}

Vec3 centroid_of(const Scene& scene, std::uint32_t t) {
  const Triangle& tri = scene.triangles[t];
  return (scene.vertices[tri.v[0]] + scene.vertices[tri.v[1]] + scene.vertices[tri.v[2]]) / 3.0;
}

// Unit directions of the chart's boundary edges (edges used by one of its triangles), with
// their lengths.
std::vector<std::pair<Vec3, double>> boundary_edges(const Scene& scene, const Chart& chart,
                                                    const std::vector<std::uint32_t>& weld) {
  const auto edges = sorted_edges(scene, chart.triangles, weld);
  std::vector<bool> single(edges.size(), false);  // by 3 p + k: an edge no other triangle uses
  for_each_edge(edges, [&](std::size_t first, std::size_t last) {
    if (last - first == 1) single[edges[first].second] = true;
  });
  std::vector<std::pair<Vec3, double>> out;
  for (std::uint32_t p = 0; p < chart.triangles.size(); ++p) {
    const Triangle& tri = scene.triangles[chart.triangles[p]];
    for (std::uint32_t k = 0; k < 3; ++k) {
      const std::uint32_t a = tri.v[k], b = tri.v[(k + 1) % 3];
      if (!single[3 * p + k]) continue;
      const Vec3 d = scene.vertices[b] - scene.vertices[a];
      const double length = norm(d);
      if (length > 0) out.push_back({d / length, length});
    }
  }
  return out;
}

// Range of dot(direction, vertex) over the chart's vertices.
std::pair<double, double> range_along(const Scene& scene, const Chart& chart, const Vec3& d) {
  double lo = INFINITY, hi = -INFINITY;
  for (std::uint32_t t : chart.triangles)
    for (std::uint32_t v : scene.triangles[t].v) {
      const double x = dot(d, scene.vertices[v]);
      lo = std::min(lo, x), hi = std::max(hi, x);
    }
  return {lo, hi};
}

// d or -d, whichever has its first clearly non-zero component positive.
Vec3 canonical(const Vec3& d) {
  for (double c : {d.x, d.y, d.z})
    if (std::fabs(c) > 1e-9) return c < 0 ? d * -1.0 : d;
  return d;
}

// Whether direction a comes before b (both canonical): by x, then y, then z, each clearly.
bool before(const Vec3& a, const Vec3& b) {
  for (int k = 0; k < 3; ++k)
    if (std::fabs(a[k] - b[k]) > 1e-9) return a[k] > b[k];
  return false;
}

// The direction of the longest total run of parallel boundary edges: the classes' length-
// weighted mean directions, ties (1e-9) going to the first by `before`, so that neither the
// order of the edges nor cutting them (which keeps every class's directions and total length)
// changes the choice. Zero when the chart has no boundary edge.
Vec3 grid_direction(const Scene& scene, const Chart& chart,
                    const std::vector<std::uint32_t>& weld) {
  struct Class {
    Vec3 first, sum;
    double length = 0;
  };
  std::vector<Class> classes;
  for (const auto& [d, length] : boundary_edges(scene, chart, weld)) {
    auto it = std::find_if(classes.begin(), classes.end(), [&](const Class& c) {
      return std::fabs(dot(c.first, d)) >= 1 - kParallel;
    });
    if (it == classes.end()) it = classes.insert(classes.end(), Class{d, Vec3{}, 0});
    it->sum += (dot(it->first, d) < 0 ? d * -1.0 : d) * length;
    it->length += length;
  }
  Vec3 best;
  double best_length = 0;
  for (const Class& c : classes) {
    const Vec3 d = canonical(normalized(c.sum));
    if (c.length > best_length * (1 + 1e-9) ||
        (c.length >= best_length * (1 - 1e-9) && before(d, best)))
      best = d, best_length = c.length;
  }
  return best;
}

// A planar chart becomes a grid of near-square cells over its bounding rectangle, taken along
// grid_direction: a rectangle when it fills that rectangle, else cells clipped to it. False
// for a chart without boundary edges.
bool lay_out_grid(const Scene& scene, const std::vector<std::uint32_t>& weld, double size,
                  const Vec3& normal, Chart* chart) {
  const Vec3 u = grid_direction(scene, *chart, weld);
  if (!(norm(u) > 0.5)) return false;
  const Vec3 v = normalized(cross(normal, u));
  const auto [u0, u1] = range_along(scene, *chart, u);
  const auto [v0, v1] = range_along(scene, *chart, v);
  const double box = (u1 - u0) * (v1 - v0);
  const bool fills = std::fabs(box - chart->area) <= kRectangleArea * box;
  chart->kind = fills ? ChartKind::rectangle : ChartKind::clipped;
  chart->u = u, chart->v = v, chart->u0 = u0, chart->v0 = v0;
  chart->nu = how_many((u1 - u0) / size);
  chart->nv = how_many((v1 - v0) / size);
  chart->du = (u1 - u0) / chart->nu;
  chart->dv = (v1 - v0) / chart->nv;
  return true;
}

double wrap_angle(double a) {
  a = std::fmod(a, 2 * kPi);
  return a < 0 ? a + 2 * kPi : a;
}

double normal_angle(const Chart& chart, const Vec3& n) {
  return wrap_angle(std::atan2(dot(n, chart.e2), dot(n, chart.e1)));
}

// The cylinder's axis: the direction all normals are perpendicular to (the eigenvector of the
// smallest eigenvalue of sum A n n^T, near zero), taken as the model axis it is within about
// 1.4e-4 rad of (the rounding of exported coordinates tilts it). Sign fixed by its largest
// component.
bool cylinder_axis(const Scene& scene, Chart* chart) {
  Eigen::Matrix3d m = Eigen::Matrix3d::Zero();
  for (std::uint32_t t : chart->triangles) {
    const Vec3 n = scene.normal(t);
    const Eigen::Vector3d e(n.x, n.y, n.z);
    m += scene.triangle_area(t) * e * e.transpose();
  }
  const Eigen::SelfAdjointEigenSolver<Eigen::Matrix3d> eigen(m);
  if (eigen.info() != Eigen::Success) return false;
  if (!(eigen.eigenvalues()(0) <= 1e-6 * m.trace())) return false;
  Eigen::Vector3d a = eigen.eigenvectors().col(0).normalized();
  Eigen::Index big = 0;
  a.cwiseAbs().maxCoeff(&big);
  if (std::fabs(a(big)) >= 1 - kParallel) a = Eigen::Vector3d::Unit(big);  // a model axis
  const double sign = a(big) < 0 ? -1 : 1;
  chart->axis = Vec3(a(0), a(1), a(2)) * sign;
  Eigen::Index small = 0;
  a.cwiseAbs().minCoeff(&small);
  Vec3 w;
  (small == 0 ? w.x : small == 1 ? w.y : w.z) = 1;
  chart->e1 = normalized(cross(chart->axis, w));
  chart->e2 = cross(chart->axis, chart->e1);
  return true;
}

// Facets tangent to one circle: n . c = n . P + rho for every triangle (P the axis point, c
// the centroid), solved by area-weighted least squares; returns |rho| or 0 when they are not.
double tangent_radius(const Scene& scene, const Chart& chart) {
  Eigen::Matrix3d a = Eigen::Matrix3d::Zero();
  Eigen::Vector3d b = Eigen::Vector3d::Zero();
  for (std::uint32_t t : chart.triangles) {
    const Vec3 n = scene.normal(t);
    const Eigen::Vector3d row(dot(n, chart.e1), dot(n, chart.e2), 1);
    const double w = scene.triangle_area(t);
    a += w * row * row.transpose();
    b += w * row * dot(n, centroid_of(scene, t));
  }
  const Eigen::SelfAdjointEigenSolver<Eigen::Matrix3d> eigen(a, Eigen::EigenvaluesOnly);
  if (eigen.info() != Eigen::Success) return 0;
  const Eigen::Vector3d lambda = eigen.eigenvalues();  // ascending
  if (!(lambda(0) > 1e-9 * lambda(2))) return 0;       // fewer than three facet directions
  const Eigen::Vector3d x = a.ldlt().solve(b);
  const double rho = x(2);
  if (!(std::fabs(rho) > 1e-9 * chart.extent)) return 0;
  for (std::uint32_t t : chart.triangles) {
    const Vec3 n = scene.normal(t);
    const double fit = dot(n, chart.e1) * x(0) + dot(n, chart.e2) * x(1) + rho;
    if (!(std::fabs(dot(n, centroid_of(scene, t)) - fit) <= kCylinderFit * std::fabs(rho)))
      return 0;
  }
  return std::fabs(rho);
}

// Sorted normal angles of the chart, one per facet (angles within kFacetAngle merged).
std::vector<double> facet_angles(const Scene& scene, const Chart& chart) {
  std::vector<double> angles;
  for (std::uint32_t t : chart.triangles) angles.push_back(normal_angle(chart, scene.normal(t)));
  std::sort(angles.begin(), angles.end());
  std::vector<double> facets;
  for (double a : angles)
    if (facets.empty() || a - facets.back() > kFacetAngle) facets.push_back(a);
  if (facets.size() > 1 && facets.back() - facets.front() > 2 * kPi - kFacetAngle)
    facets.pop_back();  // the same facet seen across the zero angle
  return facets;
}

// Sectors of whole facets are equal only when their count divides the facets': the divisor
// of `facets` nearest to `wanted` (by ratio; ties: the larger), when within 1.5 times it, else
// how_many(wanted) (unequal sectors, rather than patches far from the size asked for).
int sector_count(double wanted, std::size_t facets) {
  const int plain = how_many(wanted);
  if (facets == 0 || facets % std::size_t(plain) == 0) return plain;
  int best = plain;
  double best_ratio = 1.5 * (1 + 1e-9);
  for (std::size_t d = 1; d <= facets && d <= std::size_t(kMaxCount); ++d) {
    if (facets % d != 0) continue;
    const double ratio = std::max(double(d) / wanted, wanted / double(d));
    if (ratio <= best_ratio) best = int(d), best_ratio = ratio;
  }
  return best;
}

// Sectors around the axis: a closed cylinder (no boundary edge along the axis) from the facet
// corner nearest the zero angle; an open one from the start of its arc.
void lay_out_sectors(const Scene& scene, const std::vector<std::uint32_t>& weld, double size,
                     double radius, Chart* chart) {
  bool closed = true;
  for (const auto& [d, length] : boundary_edges(scene, *chart, weld))
    if (std::fabs(dot(d, chart->axis)) > 0.9) closed = false;
  const std::vector<double> f = facet_angles(scene, *chart);
  double arc = 2 * kPi;
  if (closed) {
    chart->theta0 = wrap_angle(0.5 * (f.back() + f.front() + 2 * kPi));
  } else {
    std::size_t after = 0;  // the facet after the largest gap starts the arc
    double gap = f.front() + 2 * kPi - f.back();
    for (std::size_t i = 1; i < f.size(); ++i)
      if (f[i] - f[i - 1] > gap) gap = f[i] - f[i - 1], after = i;
    const double span = 2 * kPi - gap;
    const double step = f.size() > 1 ? span / double(f.size() - 1) : 0;
    arc = span + step;
    chart->theta0 = wrap_angle(f[after] - 0.5 * step);
  }
  chart->sectors = sector_count(arc * radius / size, f.size());
  chart->sector = arc / chart->sectors;
}

bool try_cylinder(const Scene& scene, const std::vector<std::uint32_t>& weld, double size,
                  Chart* chart) {
  if (!cylinder_axis(scene, chart)) return false;
  const double radius = tangent_radius(scene, *chart);
  if (!(radius > 0)) return false;
  chart->kind = ChartKind::cylinder;
  const auto [t0, t1] = range_along(scene, *chart, chart->axis);
  chart->t0 = t0;
  chart->bands = how_many((t1 - t0) / size);
  chart->band = (t1 - t0) / chart->bands;
  lay_out_sectors(scene, weld, size, radius, chart);
  return true;
}

Chart make_chart(const Scene& scene, std::vector<std::uint32_t> triangles) {
  Chart chart;
  chart.triangles = std::move(triangles);
  Box3 box;
  Vec3 moment;
  for (std::uint32_t t : chart.triangles) {
    const double a = scene.triangle_area(t);
    chart.area += a;
    moment += centroid_of(scene, t) * a;
    for (std::uint32_t v : scene.triangles[t].v) box.grow(scene.vertices[v]);
  }
  chart.centroid = chart.area > 0 ? moment / chart.area : centroid_of(scene, chart.triangles[0]);
  chart.extent = box.diagonal();
  return chart;
}

void classify(const Scene& scene, const std::vector<std::uint32_t>& weld, double size,
              Chart* chart) {
  if (chart->area < 0.25 * size * size) {
    chart->kind = ChartKind::small;
    return;
  }
  Vec3 sum;
  for (std::uint32_t t : chart->triangles) sum += scene.normal(t) * scene.triangle_area(t);
  const Vec3 normal = normalized(sum);
  const bool planar =
      std::all_of(chart->triangles.begin(), chart->triangles.end(),
                  [&](std::uint32_t t) { return dot(scene.normal(t), normal) >= 1 - kParallel; });
  if (planar ? lay_out_grid(scene, weld, size, normal, chart)
             : try_cylinder(scene, weld, size, chart))
    return;
  chart->kind = ChartKind::regions;
  chart->regions =
      std::min(how_many(chart->area / (size * size)),
               static_cast<int>(std::min<std::size_t>(chart->triangles.size(), kMaxCount)));
}

// The cell of x on a row of `count` cells of `width` from 0; outside (or NaN): the nearest end.
std::uint32_t cell(double x, double width, int count) {
  const double i = std::floor(x / width);
  if (!(i > 0)) return 0;
  return static_cast<std::uint32_t>(std::min(i, static_cast<double>(count - 1)));
}

}  // namespace

std::vector<std::uint32_t> weld_ids(const std::vector<Vec3>& vertices) {
  return mesh_detail::weld_by_position(vertices);
}

std::vector<std::pair<std::uint64_t, std::uint32_t>> sorted_edges(
    const Scene& scene, const std::vector<std::uint32_t>& triangles,
    const std::vector<std::uint32_t>& weld) {
  std::vector<std::pair<std::uint64_t, std::uint32_t>> edges;
  edges.reserve(3 * triangles.size());
  for (std::uint32_t p = 0; p < triangles.size(); ++p) {
    const Triangle& tri = scene.triangles[triangles[p]];
    for (std::uint32_t k = 0; k < 3; ++k)
      edges.push_back({edge_key(weld[tri.v[k]], weld[tri.v[(k + 1) % 3]]), 3 * p + k});
  }
  std::sort(edges.begin(), edges.end());
  return edges;
}

std::uint64_t edge_key(std::uint32_t a, std::uint32_t b) {
  if (a > b) std::swap(a, b);
  return (std::uint64_t(a) << 32) | b;
}

std::vector<Chart> lay_out(const Scene& scene, std::uint32_t surface, double size,
                           const std::vector<std::uint32_t>& weld) {
  std::vector<Chart> charts;
  for (auto& triangles : segment(scene, surface, weld)) {
    charts.push_back(make_chart(scene, std::move(triangles)));
    classify(scene, weld, size, &charts.back());
  }
  return charts;
}

std::vector<CutPlane> cut_planes(const Chart& chart) {
  std::vector<CutPlane> planes;
  const double tolerance = kOnPlane * chart.extent;
  if (chart.kind == ChartKind::rectangle || chart.kind == ChartKind::clipped) {
    for (int i = 1; i < chart.nu; ++i)
      planes.push_back({chart.u, chart.u0 + i * chart.du, tolerance});
    for (int j = 1; j < chart.nv; ++j)
      planes.push_back({chart.v, chart.v0 + j * chart.dv, tolerance});
  } else if (chart.kind == ChartKind::cylinder) {
    for (int b = 1; b < chart.bands; ++b)
      planes.push_back({chart.axis, chart.t0 + b * chart.band, tolerance});
  }
  return planes;
}

std::vector<std::uint32_t> pieces(const Scene& scene, const Chart& chart,
                                  const std::vector<std::uint32_t>& weld) {
  std::vector<std::uint32_t> out(chart.triangles.size(), 0);
  switch (chart.kind) {
    case ChartKind::rectangle:
      for (std::size_t k = 0; k < out.size(); ++k) {
        const Vec3 c = centroid_of(scene, chart.triangles[k]);
        out[k] = cell(dot(c, chart.v) - chart.v0, chart.dv, chart.nv) * chart.nu +
                 cell(dot(c, chart.u) - chart.u0, chart.du, chart.nu);
      }
      break;
    case ChartKind::cylinder:
      for (std::size_t k = 0; k < out.size(); ++k) {
        const std::uint32_t t = chart.triangles[k];
        const double along = dot(centroid_of(scene, t), chart.axis) - chart.t0;
        const double around = wrap_angle(normal_angle(chart, scene.normal(t)) - chart.theta0);
        out[k] = cell(along, chart.band, chart.bands) * chart.sectors +
                 cell(around, chart.sector, chart.sectors);
      }
      break;
    case ChartKind::clipped:
      out = clipped_cells(scene, chart, weld);
      break;
    case ChartKind::regions:
      if (chart.regions > 1) out = grow_regions(scene, chart, weld);
      break;
    case ChartKind::small:
      break;
  }
  return out;
}

}  // namespace hearthray::patch_layout
