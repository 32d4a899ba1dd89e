// Panels cut out of flat host surfaces (hearthray/panels.hpp).
//
// Points made by the cut are pure functions of what they lie on: a crossing of a mesh edge
// with an edge line of the rectangle is computed from the edge's ends in a fixed order (by
// position), a corner of the rectangle from the rectangle alone. So the two triangles beside
// a mesh edge get the very same crossing point, and the same vertex.
#include "hearthray/panels.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <tuple>

#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "mesh/polygon.hpp"

namespace hearthray {
namespace {

bool before(const Vec3& a, const Vec3& b) {
  return std::tie(a.x, a.y, a.z) < std::tie(b.x, b.y, b.z);
}

using EdgeKey = std::tuple<double, double, double, double, double, double>;
EdgeKey edge_key(Vec3 a, Vec3 b) {
  if (before(b, a)) std::swap(a, b);
  return {a.x, a.y, a.z, b.x, b.y, b.z};
}

// The rectangle: centre, unit axes u (length) and v (width) in the plane, normal n, half
// sizes. Edge line m: 0 at s = +L/2, 1 at s = -L/2, 2 at t = +W/2, 3 at t = -W/2.
struct Rect {
  Vec3 centre, u, v, n;
  double half_length = 0, half_width = 0;

  // How far p lies past edge line m (positive: outside), as 0 within `eps` of the line.
  double past(int m, const Vec3& p, double eps) const {
    const Vec3 d = p - centre;
    const double s = m < 2 ? dot(d, u) : dot(d, v);
    const double value = (m % 2 == 0 ? s : -s) - (m < 2 ? half_length : half_width);
    return std::fabs(value) <= eps ? 0.0 : value;
  }
  Vec3 corner(double su, double sv) const {
    return centre + u * (su * half_length) + v * (sv * half_width);
  }
};

// What a piece's edge lies on: an edge line of the rectangle, or the mesh edge a-b.
struct Support {
  int line = -1;
  std::uint32_t a = 0, b = 0;
};

// A convex piece of a host triangle: its corners, and what each edge k -> k+1 lies on.
struct Piece {
  std::vector<std::uint32_t> v;
  std::vector<Support> s;
};

class Cutter {
 public:
  Cutter(Scene* scene, const Rect& rect, double eps) : scene_(*scene), rect_(rect), eps_(eps) {}

  double past(int m, std::uint32_t vertex) const {
    return rect_.past(m, scene_.vertices[vertex], eps_);
  }

  // The part of `piece` on one side of edge line m: side -1 keeps the inside (past <= 0),
  // +1 the outside (past >= 0). Points on the line belong to both.
  Piece clip(const Piece& piece, int m, int side) {
    Piece out;
    const std::size_t n = piece.v.size();
    for (std::size_t k = 0; k < n; ++k) {
      const std::uint32_t a = piece.v[k], b = piece.v[(k + 1) % n];
      const double da = past(m, a), db = past(m, b);
      const bool keep_a = side * da >= 0, keep_b = side * db >= 0, crosses = da * db < 0;
      if (keep_a) {
        out.v.push_back(a);
        out.s.push_back(keep_b || crosses ? piece.s[k] : Support{m, 0, 0});
      }
      if (crosses) {
        out.v.push_back(crossing(piece.s[k], m));
        out.s.push_back(keep_a ? Support{m, 0, 0} : piece.s[k]);
      }
    }
    return out;
  }

  // The points made inside mesh edges, by edge: a triangle that still has such an edge (a
  // neighbour that was not cut, of the host or of another surface) must be split there.
  const std::map<EdgeKey, std::vector<std::uint32_t>>& on_edges() const { return on_edges_; }

 private:
  // The vertex where an edge lying on `s` crosses edge line m.
  std::uint32_t crossing(const Support& s, int m) {
    Vec3 p;
    std::tuple<EdgeKey, int, int> key;
    if (s.line >= 0) {
      const int along_u = s.line < 2 ? s.line : m, along_v = s.line < 2 ? m : s.line;
      p = rect_.corner(along_u == 0 ? 1 : -1, along_v == 2 ? 1 : -1);
      key = {EdgeKey{}, std::min(s.line, m), std::max(s.line, m)};
    } else {
      Vec3 lo = scene_.vertices[s.a], hi = scene_.vertices[s.b];
      if (before(hi, lo)) std::swap(lo, hi);
      const double d_lo = rect_.past(m, lo, eps_), d_hi = rect_.past(m, hi, eps_);
      p = lo + (hi - lo) * (d_lo / (d_lo - d_hi));
      key = {edge_key(lo, hi), m, -1};
    }
    const auto [it, added] = made_.emplace(key, std::uint32_t(scene_.vertices.size()));
    if (added) {
      scene_.vertices.push_back(p);
      if (s.line < 0) on_edges_[std::get<0>(key)].push_back(it->second);
    }
    return it->second;
  }

  Scene& scene_;
  Rect rect_;
  double eps_;
  std::map<std::tuple<EdgeKey, int, int>, std::uint32_t> made_;
  std::map<EdgeKey, std::vector<std::uint32_t>> on_edges_;
};

double polygon_area(const std::vector<std::uint32_t>& v, const std::vector<Vec3>& vertices) {
  Vec3 sum;
  for (std::size_t k = 0; k < v.size(); ++k)
    sum += cross(vertices[v[k]], vertices[v[(k + 1) % v.size()]]);
  return 0.5 * norm(sum);
}

// Triangles of a convex piece into `out` (none for a piece of no area); returns its area.
double add_piece(const Piece& piece, std::uint32_t surface, double min_area, Scene* scene,
                 std::vector<Triangle>* out) {
  if (piece.v.size() < 3) return 0;
  const double area = polygon_area(piece.v, scene->vertices);
  if (area <= min_area) return 0;
  for (const auto& t : mesh_detail::triangulate_polygon(piece.v, scene->vertices).triangles)
    out->push_back({t, surface});
  return area;
}

std::string message_head(const PanelPlacement& p) {
  return (p.where.empty() ? "panel '" + p.name + "'" : p.where) + ": ";
}

// The host's plane (unit normal n, offset d: dot(n, x) = d); throws when the host is not flat.
struct HostPlane {
  Vec3 n;
  double d = 0;
};
HostPlane host_plane(const Scene& scene, const Surface& host, const PanelPlacement& p) {
  HostPlane plane;
  Vec3 sum;
  const std::uint32_t end = host.first_triangle + host.triangle_count;
  for (std::uint32_t t = host.first_triangle; t < end; ++t)
    sum += scene.normal(t) * scene.triangle_area(t);
  if (!(norm(sum) > 0)) throw InputError(message_head(p) + "host '" + host.name + "' has no area");
  plane.n = normalized(sum);
  plane.d = dot(plane.n, scene.vertices[scene.triangles[host.first_triangle].v[0]]);
  const double tolerance = 1e-7 * scene.bounds.diagonal();
  for (std::uint32_t t = host.first_triangle; t < end; ++t) {
    const Triangle& tri = scene.triangles[t];
    bool flat = dot(scene.normal(t), plane.n) > 1 - 1e-9;
    for (const std::uint32_t v : tri.v)
      flat = flat && std::fabs(dot(plane.n, scene.vertices[v]) - plane.d) <= tolerance;
    if (!flat)
      throw InputError(message_head(p) + "its host '" + host.name +
                       "' is not flat; a panel is placed on a flat surface (one plane, one "
                       "facing)");
  }
  return plane;
}

Vec3 default_along(const Vec3& n) {
  for (const Vec3 axis : {Vec3{1, 0, 0}, Vec3{0, 1, 0}, Vec3{0, 0, 1}}) {
    const Vec3 a = axis - n * dot(axis, n);
    if (norm(a) >= 0.5) return a;
  }
  return {1, 0, 0};  // not reached: one axis always projects to at least 1/sqrt(3)
}

Rect panel_rect(const Scene& scene, const Surface& host, const HostPlane& plane,
                const PanelPlacement& p) {
  if (!(p.length > 0 && p.width > 0 && std::isfinite(p.length) && std::isfinite(p.width)))
    throw InputError(message_head(p) + "its size must be two positive lengths");
  Rect r;
  r.n = plane.n;
  const double off = dot(plane.n, p.centre) - plane.d;
  if (!(std::fabs(off) <= 1e-6 * scene.bounds.diagonal()))
    throw InputError(message_head(p) + "its centre is " + rounded("%.4g m", std::fabs(off)) +
                     " off the plane of its host '" + host.name +
                     "'; give a centre on that surface");
  r.centre = p.centre - plane.n * off;
  const Vec3 along = p.along ? *p.along : default_along(plane.n);
  const Vec3 in_plane = along - plane.n * dot(along, plane.n);
  if (!(norm(in_plane) > 0.1 * norm(along)))
    throw InputError(message_head(p) + "'along' is (nearly) normal to its host '" + host.name +
                     "'; give a direction in the host's plane");
  r.u = normalized(in_plane);
  r.v = cross(plane.n, r.u);
  r.half_length = 0.5 * p.length;
  r.half_width = 0.5 * p.width;
  return r;
}

// Whether two rectangles in one plane overlap by more than `eps` (separating axes).
bool overlap(const Rect& a, const Rect& b, double eps) {
  for (const Vec3& axis : {a.u, a.v, b.u, b.v}) {
    auto extent = [&](const Rect& r) {
      const double c = dot(r.centre, axis);
      const double h =
          r.half_length * std::fabs(dot(r.u, axis)) + r.half_width * std::fabs(dot(r.v, axis));
      return std::pair<double, double>{c - h, c + h};
    };
    const auto [a0, a1] = extent(a);
    const auto [b0, b1] = extent(b);
    if (std::min(a1, b1) - std::max(a0, b0) <= eps) return false;
  }
  return true;
}

}  // namespace

namespace {

// The host's triangles split by `rect`: those outside stay the host's, those inside go to
// the panel (surface index `panel`). Returns the panel's area.
double cut_host(Scene* scene, std::uint32_t host_index, std::uint32_t panel, const Rect& rect,
                const PanelPlacement& p, std::vector<Triangle>* host_out,
                std::vector<Triangle>* panel_out,
                std::map<EdgeKey, std::vector<std::uint32_t>>* on_edges) {
  const double eps = 1e-9 * scene->bounds.diagonal();
  Cutter cutter(scene, rect, eps);
  const Surface host = scene->surfaces[host_index];
  double area = 0;
  for (std::uint32_t t = host.first_triangle; t < host.first_triangle + host.triangle_count; ++t) {
    const Triangle tri = scene->triangles[t];
    // No edge line crosses an edge of the triangle: no line cuts it, it is all in or all out.
    bool crossed = false, inside = true;
    for (int m = 0; m < 4; ++m)
      for (int k = 0; k < 3; ++k) {
        const double a = cutter.past(m, tri.v[k]), b = cutter.past(m, tri.v[(k + 1) % 3]);
        crossed = crossed || a * b < 0;
        inside = inside && a <= 0;
      }
    if (!crossed) {
      if (inside) area += scene->triangle_area(t);
      (inside ? panel_out : host_out)->push_back({tri.v, inside ? panel : host_index});
      continue;
    }
    // Cut by all four lines into up to nine cells, every cell by every line, so that a corner
    // of the rectangle is a corner of each cell beside it; the middle cell is the panel's.
    std::vector<std::pair<Piece, bool>> cells = {
        {{{tri.v[0], tri.v[1], tri.v[2]},
          {{-1, tri.v[0], tri.v[1]}, {-1, tri.v[1], tri.v[2]}, {-1, tri.v[2], tri.v[0]}}},
         true}};
    for (int m = 0; m < 4; ++m) {
      std::vector<std::pair<Piece, bool>> next;
      for (const auto& [cell, in] : cells)
        for (const int side : {-1, +1}) {
          Piece part = cutter.clip(cell, m, side);
          if (part.v.size() >= 3) next.emplace_back(std::move(part), in && side < 0);
        }
      cells = std::move(next);
    }
    const double min_area = 1e-12 * scene->triangle_area(t);
    for (const auto& [cell, in] : cells)
      if (in)
        area += add_piece(cell, panel, min_area, scene, panel_out);
      else
        add_piece(cell, host_index, min_area, scene, host_out);
  }
  const double wanted = 4 * rect.half_length * rect.half_width;
  if (std::fabs(area - wanted) > 1e-9 * wanted)
    throw InputError(message_head(p) + "only " + rounded("%.4g", area) + " of its " +
                     rounded("%.4g m2", wanted) + " lie on its host '" + host.name +
                     "': it reaches past the host's edge or over a hole in it (such as a "
                     "window); move it or make it smaller");
  *on_edges = cutter.on_edges();
  return area;
}

// Rebuilds the triangle list with the host's new triangles and the panel appended.
void replace_host(Scene* scene, std::uint32_t host_index, std::vector<Triangle> host_triangles,
                  std::vector<Triangle> panel_triangles, const std::string& name) {
  std::vector<Triangle> all;
  all.reserve(scene->triangles.size() + host_triangles.size() + panel_triangles.size());
  auto area_of = [&](std::uint32_t first, std::uint32_t count) {
    double a = 0;
    for (std::uint32_t t = first; t < first + count; ++t) a += scene->triangle_area(t);
    return a;
  };
  std::vector<Triangle> old = std::move(scene->triangles);
  for (std::uint32_t s = 0; s < scene->surfaces.size(); ++s) {
    Surface& surface = scene->surfaces[s];
    const std::uint32_t first = std::uint32_t(all.size());
    if (s == host_index)
      all.insert(all.end(), host_triangles.begin(), host_triangles.end());
    else
      all.insert(all.end(), old.begin() + surface.first_triangle,
                 old.begin() + surface.first_triangle + surface.triangle_count);
    surface.first_triangle = first;
    surface.triangle_count = std::uint32_t(all.size()) - first;
  }
  Surface panel;
  panel.name = name;
  panel.first_triangle = std::uint32_t(all.size());
  panel.triangle_count = std::uint32_t(panel_triangles.size());
  all.insert(all.end(), panel_triangles.begin(), panel_triangles.end());
  scene->triangles = std::move(all);
  scene->surfaces.push_back(panel);
  for (Surface* s : {&scene->surfaces[host_index], &scene->surfaces.back()})
    s->area = area_of(s->first_triangle, s->triangle_count);
}

// Splits every triangle (of any surface) that still has an edge with points made inside it,
// so that no point lies inside another triangle's edge: the mesh stays closed. Areas stay.
void split_at_points(Scene* scene, const std::map<EdgeKey, std::vector<std::uint32_t>>& points) {
  if (points.empty()) return;
  std::vector<Triangle> all;
  all.reserve(scene->triangles.size() + 2 * points.size());
  for (Surface& surface : scene->surfaces) {
    const std::uint32_t first = std::uint32_t(all.size());
    for (std::uint32_t t = surface.first_triangle;
         t < surface.first_triangle + surface.triangle_count; ++t) {
      const Triangle tri = scene->triangles[t];
      std::vector<std::uint32_t> ring;
      for (int k = 0; k < 3; ++k) {
        const Vec3 a = scene->vertices[tri.v[k]], b = scene->vertices[tri.v[(k + 1) % 3]];
        ring.push_back(tri.v[k]);
        const auto it = points.find(edge_key(a, b));
        if (it == points.end()) continue;
        std::vector<std::uint32_t> on = it->second;  // in order from a to b
        std::sort(on.begin(), on.end(), [&](std::uint32_t i, std::uint32_t j) {
          return dot(scene->vertices[i] - a, b - a) < dot(scene->vertices[j] - a, b - a);
        });
        ring.insert(ring.end(), on.begin(), on.end());
      }
      if (ring.size() == 3) {
        all.push_back(tri);
        continue;
      }
      for (const auto& v : mesh_detail::triangulate_polygon(ring, scene->vertices).triangles)
        all.push_back({v, tri.surface});
    }
    surface.first_triangle = first;
    surface.triangle_count = std::uint32_t(all.size()) - first;
  }
  scene->triangles = std::move(all);
}

}  // namespace

std::vector<PanelCut> place_panels(Scene* scene, const std::vector<PanelPlacement>& panels) {
  std::vector<PanelCut> cuts;
  std::vector<std::pair<std::string, Rect>> placed;  // host name, rectangle
  const std::size_t mesh_surfaces = scene->surfaces.size();
  for (const PanelPlacement& p : panels) {
    if (scene->find_surface(p.name) >= 0)
      throw InputError(message_head(p) + "'" + p.name +
                       "' is already a surface of the mesh or an earlier panel; give the panel a "
                       "name of its own");
    const int host_index = scene->find_surface(p.host);
    if (host_index < 0)
      throw InputError(
          message_head(p) + "its host '" + p.host +
          "' is not a surface of the mesh; the surfaces are: " + join(scene->surface_names()));
    if (std::size_t(host_index) >= mesh_surfaces)
      throw InputError(message_head(p) + "its host '" + p.host +
                       "' is a placed panel; place panels on a surface of the mesh");
    const Surface host = scene->surfaces[std::size_t(host_index)];
    const HostPlane plane = host_plane(*scene, host, p);
    const Rect rect = panel_rect(*scene, host, plane, p);
    for (std::size_t k = 0; k < placed.size(); ++k)
      if (placed[k].first == p.host &&
          overlap(rect, placed[k].second, 1e-9 * scene->bounds.diagonal()))
        throw InputError(message_head(p) + "it overlaps panel '" + cuts[k].name + "' on '" +
                         p.host + "'; move one of them");
    std::vector<Triangle> host_triangles, panel_triangles;
    const std::uint32_t panel_index = std::uint32_t(scene->surfaces.size());
    std::map<EdgeKey, std::vector<std::uint32_t>> on_edges;
    const double area = cut_host(scene, std::uint32_t(host_index), panel_index, rect, p,
                                 &host_triangles, &panel_triangles, &on_edges);
    replace_host(scene, std::uint32_t(host_index), std::move(host_triangles),
                 std::move(panel_triangles), p.name);
    split_at_points(scene, on_edges);
    cuts.push_back({p.name, p.host, area, host.area, scene->surfaces[host_index].area});
    placed.emplace_back(p.host, rect);
  }
  return cuts;
}

}  // namespace hearthray
