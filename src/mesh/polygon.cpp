// Ear clipping of one polygon in its own plane (see polygon.hpp).
#include "mesh/polygon.hpp"

#include <algorithm>
#include <cmath>

namespace hearthray::mesh_detail {
namespace {

struct P2 {
  double x = 0, y = 0;
};

// Twice the signed area of (a, b, c): positive when they run counter-clockwise.
double cross2(const P2& a, const P2& b, const P2& c) {
  return (b.x - a.x) * (c.y - a.y) - (b.y - a.y) * (c.x - a.x);
}

// Newell's normal of the polygon (its length is twice the polygon's area when planar).
Vec3 newell_normal(const std::vector<std::uint32_t>& c, const std::vector<Vec3>& v) {
  Vec3 n;
  for (std::size_t i = 0; i < c.size(); ++i) n += cross(v[c[i]], v[c[(i + 1) % c.size()]]);
  return n;
}

// Fan from the first corner: the cut for polygons too degenerate to have a plane (their
// triangles are then dropped as zero-area, and counted, by the loader).
void fan(const std::vector<std::uint32_t>& c, PolygonCut* cut) {
  for (std::size_t i = 1; i + 1 < c.size(); ++i) cut->triangles.push_back({c[0], c[i], c[i + 1]});
}

// A convex quadrilateral is cut along its shorter diagonal, as the OBJ reader used before
// did, so that meshes of quads keep the triangles (and the rays) they had.
bool convex_quad(const std::vector<std::uint32_t>& c, const std::vector<P2>& p, double eps,
                 const std::vector<Vec3>& v, PolygonCut* cut) {
  for (int i = 0; i < 4; ++i)
    if (!(cross2(p[i], p[(i + 1) % 4], p[(i + 2) % 4]) > eps)) return false;
  const Vec3 d02 = v[c[2]] - v[c[0]], d13 = v[c[3]] - v[c[1]];
  if (dot(d02, d02) < dot(d13, d13)) {
    cut->triangles.push_back({c[0], c[1], c[2]});
    cut->triangles.push_back({c[0], c[2], c[3]});
  } else {
    cut->triangles.push_back({c[0], c[1], c[3]});
    cut->triangles.push_back({c[1], c[2], c[3]});
  }
  return true;
}

// Whether two edges of the polygon that share no corner cross or touch (O(n^2): polygons of
// a model have a handful of corners, a few hundred at most).
bool crosses_itself(const std::vector<P2>& p, double eps) {
  const std::size_t n = p.size();
  for (std::size_t i = 0; i < n; ++i) {
    const P2 &a = p[i], &b = p[(i + 1) % n];
    for (std::size_t j = i + 2; j < n; ++j) {
      if ((j + 1) % n == i) continue;  // adjacent through the closing edge
      const P2 &c = p[j], &d = p[(j + 1) % n];
      const double d1 = cross2(a, b, c), d2 = cross2(a, b, d);
      const double d3 = cross2(c, d, a), d4 = cross2(c, d, b);
      if (((d1 > eps && d2 < -eps) || (d1 < -eps && d2 > eps)) &&
          ((d3 > eps && d4 < -eps) || (d3 < -eps && d4 > eps)))
        return true;
    }
  }
  return false;
}

bool same_place(const P2& a, const P2& b) {
  return a.x == b.x && a.y == b.y;
}

// Whether corner ring[i] is an ear of the ring: a strictly convex corner whose triangle holds
// no other corner of the ring, inside or on its edges (corners at the same place as one of its
// own three excepted).
bool is_ear(const std::vector<std::size_t>& ring, std::size_t i, const std::vector<P2>& p,
            double eps) {
  const std::size_t m = ring.size();
  const P2& a = p[ring[(i + m - 1) % m]];
  const P2& b = p[ring[i]];
  const P2& c = p[ring[(i + 1) % m]];
  if (!(cross2(a, b, c) > eps)) return false;
  for (std::size_t k = 0; k < m; ++k) {
    const P2& q = p[ring[k]];
    if (same_place(q, a) || same_place(q, b) || same_place(q, c)) continue;
    if (cross2(a, b, q) >= -eps && cross2(b, c, q) >= -eps && cross2(c, a, q) >= -eps) return false;
  }
  return true;
}

// Ear clipping of the projected polygon. Each search starts at the corner after the last one
// clipped, so a convex polygon is cut as a fan from its first corner.
void clip_ears(const std::vector<std::uint32_t>& c, const std::vector<P2>& p, double eps,
               PolygonCut* cut) {
  std::vector<std::size_t> ring(c.size());
  for (std::size_t i = 0; i < ring.size(); ++i) ring[i] = i;
  std::size_t start = 1;
  while (ring.size() > 3) {
    const std::size_t m = ring.size();
    std::size_t ear = m;
    for (std::size_t k = 0; k < m && ear == m; ++k)
      if (is_ear(ring, (start + k) % m, p, eps)) ear = (start + k) % m;
    if (ear == m) {  // no ear: the polygon crosses itself; cut what is left as a fan
      cut->clean = false;
      std::vector<std::uint32_t> rest;
      for (std::size_t r : ring) rest.push_back(c[r]);
      fan(rest, cut);
      return;
    }
    cut->triangles.push_back({c[ring[(ear + m - 1) % m]], c[ring[ear]], c[ring[(ear + 1) % m]]});
    ring.erase(ring.begin() + static_cast<std::ptrdiff_t>(ear));
    start = ear % ring.size();
  }
  cut->triangles.push_back({c[ring[0]], c[ring[1]], c[ring[2]]});
}

}  // namespace

PolygonCut triangulate_polygon(const std::vector<std::uint32_t>& corners,
                               const std::vector<Vec3>& vertices) {
  PolygonCut cut;
  // Corners repeated in a row (same position) are one corner.
  std::vector<std::uint32_t> c;
  for (std::uint32_t k : corners)
    if (c.empty() || !(vertices[k] == vertices[c.back()])) c.push_back(k);
  while (c.size() > 1 && vertices[c.front()] == vertices[c.back()]) c.pop_back();

  Box3 box;
  for (std::uint32_t k : c) box.grow(vertices[k]);
  cut.size = c.empty() ? 0.0 : box.diagonal();
  if (corners.size() == 3 || c.size() < 3) {
    fan(corners, &cut);
    return cut;
  }
  const Vec3 n = newell_normal(c, vertices);
  const double length = norm(n);
  if (!(length > 1e-12 * cut.size * cut.size)) {
    fan(corners, &cut);
    return cut;
  }
  const Vec3 unit = n / length;
  Vec3 centre;
  for (std::uint32_t k : c) centre += vertices[k];
  centre = centre / double(c.size());
  // Axes u, w of the plane with u x w = normal: the polygon runs counter-clockwise in them.
  const Vec3 helper = std::fabs(unit.x) < 0.6 ? Vec3{1, 0, 0} : Vec3{0, 1, 0};
  const Vec3 u = normalized(cross(helper, unit));
  const Vec3 w = cross(unit, u);
  std::vector<P2> p;
  for (std::uint32_t k : c) {
    const Vec3 d = vertices[k] - centre;
    p.push_back({dot(d, u), dot(d, w)});
    cut.out_of_plane = std::max(cut.out_of_plane, std::fabs(dot(d, unit)));
  }
  // Twice an area below this is no area (scale-free, like the loader's degenerate test).
  const double eps = 1e-12 * cut.size * cut.size;
  if (c.size() == 3) {
    cut.triangles.push_back({c[0], c[1], c[2]});
  } else if (!(c.size() == 4 && convex_quad(c, p, eps, vertices, &cut))) {
    if (crosses_itself(p, eps)) cut.clean = false;
    clip_ears(c, p, eps, &cut);
  }
  return cut;
}

}  // namespace hearthray::mesh_detail
