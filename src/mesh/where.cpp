// Gaps and touching faces, with coordinates (see mesh_where.hpp).
#include <algorithm>
#include <cmath>
#include <map>
#include <numeric>
#include <tuple>
#include <unordered_map>

#include "core/text.hpp"
#include "hearthray/mesh_where.hpp"
#include "mesh/topology.hpp"

namespace hearthray {
namespace {

struct P2 {
  double x = 0, y = 0;
};

double cross2(const P2& a, const P2& b, const P2& c) {
  return (b.x - a.x) * (c.y - a.y) - (b.y - a.y) * (c.x - a.x);
}

std::uint32_t find_root(std::vector<std::uint32_t>& parent, std::uint32_t i) {
  while (parent[i] != i) i = parent[i] = parent[parent[i]];
  return i;
}

// One triangle as the contact search sees it.
struct Face {
  Vec3 n;    // unit normal
  double d;  // plane offset: dot(n, p) = d
  Box3 box;
  std::uint32_t triangle;
};

// The part of triangle `b` inside triangle `a`, both in a's plane, projected by dropping the
// axis `drop` (the largest component of a's normal): a convex polygon (Sutherland-Hodgman).
std::vector<P2> clip_in_plane(const std::array<P2, 3>& a, const std::array<P2, 3>& b) {
  std::vector<P2> poly(b.begin(), b.end());
  const double orientation = cross2(a[0], a[1], a[2]) > 0 ? 1.0 : -1.0;
  for (int e = 0; e < 3 && !poly.empty(); ++e) {
    const P2 &p = a[e], &q = a[(e + 1) % 3];
    std::vector<P2> out;
    for (std::size_t i = 0; i < poly.size(); ++i) {
      const P2 &s = poly[i], &t = poly[(i + 1) % poly.size()];
      const double fs = orientation * cross2(p, q, s), ft = orientation * cross2(p, q, t);
      if (fs >= 0) out.push_back(s);
      if ((fs >= 0) != (ft >= 0)) {
        const double k = fs / (fs - ft);
        out.push_back({s.x + k * (t.x - s.x), s.y + k * (t.y - s.y)});
      }
    }
    poly = std::move(out);
  }
  return poly;
}

// The two axes kept when `drop` is dropped.
P2 project(const Vec3& p, int drop) {
  if (drop == 0) return {p.y, p.z};
  if (drop == 1) return {p.z, p.x};
  return {p.x, p.y};
}

// The point of the plane (n, d) over the projected point q.
Vec3 lift(const P2& q, int drop, const Vec3& n, double d) {
  if (drop == 0) return {(d - n.y * q.x - n.z * q.y) / n.x, q.x, q.y};
  if (drop == 1) return {q.y, (d - n.z * q.x - n.x * q.y) / n.y, q.x};
  return {q.x, q.y, (d - n.x * q.x - n.y * q.y) / n.z};
}

int largest_axis(const Vec3& v) {
  const double x = std::fabs(v.x), y = std::fabs(v.y), z = std::fabs(v.z);
  return x >= y && x >= z ? 0 : (y >= z ? 1 : 2);
}

bool boxes_meet(const Box3& a, const Box3& b, double tol) {
  return a.lo.x <= b.hi.x + tol && b.lo.x <= a.hi.x + tol && a.lo.y <= b.hi.y + tol &&
         b.lo.y <= a.hi.y + tol && a.lo.z <= b.hi.z + tol && b.lo.z <= a.hi.z + tol;
}

// Adds the overlap of faces f and g (coplanar) to `contact`; false when they only touch.
bool add_overlap(const Scene& scene, const Face& f, const Face& g, double min_area,
                 FaceContact* contact) {
  const int drop = largest_axis(f.n);
  std::array<P2, 3> a, b;
  for (int k = 0; k < 3; ++k) {
    a[k] = project(scene.vertices[scene.triangles[f.triangle].v[k]], drop);
    b[k] = project(scene.vertices[scene.triangles[g.triangle].v[k]], drop);
  }
  const std::vector<P2> poly = clip_in_plane(a, b);
  if (poly.size() < 3) return false;
  double area2 = 0;
  P2 c;
  for (std::size_t i = 1; i + 1 < poly.size(); ++i) {
    const double t = cross2(poly[0], poly[i], poly[i + 1]);
    area2 += t;
    c.x += t * (poly[0].x + poly[i].x + poly[i + 1].x) / 3;
    c.y += t * (poly[0].y + poly[i].y + poly[i + 1].y) / 3;
  }
  const double area = std::fabs(area2) / 2 / std::fabs(f.n[drop]);
  if (!(area > min_area)) return false;
  const Vec3 centre = lift({c.x / area2, c.y / area2}, drop, f.n, f.d);
  contact->centre = (contact->centre * contact->area + centre * area) / (contact->area + area);
  contact->area += area;
  for (const P2& q : poly) contact->box.grow(lift(q, drop, f.n, f.d));
  for (std::size_t i = 1; i + 1 < poly.size() && contact->pieces.size() < 1000; ++i)
    contact->pieces.push_back({lift(poly[0], drop, f.n, f.d), lift(poly[i], drop, f.n, f.d),
                               lift(poly[i + 1], drop, f.n, f.d)});
  return true;
}

// Signed distances of triangle `g`'s corners from the plane of `f`.
std::array<double, 3> distances(const Scene& scene, const Face& f, const Face& g) {
  std::array<double, 3> d{};
  for (int k = 0; k < 3; ++k)
    d[k] = dot(f.n, scene.vertices[scene.triangles[g.triangle].v[k]]) - f.d;
  return d;
}

bool straddles(const std::array<double, 3>& d, double tol) {
  const double lo = std::min({d[0], d[1], d[2]}), hi = std::max({d[0], d[1], d[2]});
  return lo < -tol && hi > tol;
}

// The segment where triangle g (straddling f's plane, distances d) crosses that plane.
std::array<Vec3, 2> plane_cut(const Scene& scene, const Face& g, const std::array<double, 3>& d) {
  std::array<Vec3, 2> out;
  int n = 0;
  for (int k = 0; k < 3 && n < 2; ++k) {
    const int j = (k + 1) % 3;
    const Vec3& a = scene.vertices[scene.triangles[g.triangle].v[k]];
    const Vec3& b = scene.vertices[scene.triangles[g.triangle].v[j]];
    if ((d[k] < 0) != (d[j] < 0)) out[n++] = a + (b - a) * (d[k] / (d[k] - d[j]));
  }
  return out;
}

// Where triangles f and g cut through each other (each straddles the other's plane): the
// overlap of their two cuts along the planes' common line; false when it is shorter than tol.
bool crossing(const Scene& scene, const Face& f, const Face& g, double tol,
              std::array<Vec3, 2>* segment) {
  const std::array<double, 3> dg = distances(scene, f, g), df = distances(scene, g, f);
  if (!straddles(dg, tol) || !straddles(df, tol)) return false;
  const std::array<Vec3, 2> a = plane_cut(scene, g, dg), b = plane_cut(scene, f, df);
  const Vec3 line = cross(f.n, g.n);
  double a0 = dot(line, a[0]), a1 = dot(line, a[1]), b0 = dot(line, b[0]), b1 = dot(line, b[1]);
  Vec3 pa0 = a[0], pa1 = a[1], pb0 = b[0], pb1 = b[1];
  if (a0 > a1) std::swap(a0, a1), std::swap(pa0, pa1);
  if (b0 > b1) std::swap(b0, b1), std::swap(pb0, pb1);
  const double scale = norm(line);
  if ((std::min(a1, b1) - std::max(a0, b0)) / scale <= tol) return false;
  (*segment)[0] = a0 > b0 ? pa0 : pb0;
  (*segment)[1] = a1 < b1 ? pa1 : pb1;
  return true;
}

// Adds a piece of the line where two faces cross to a crossing contact.
void add_crossing(const std::array<Vec3, 2>& segment, FaceContact* contact) {
  const double length = norm(segment[1] - segment[0]);
  const Vec3 mid = (segment[0] + segment[1]) * 0.5;
  contact->centre = (contact->centre * contact->length + mid * length) / (contact->length + length);
  contact->length += length;
  contact->box.grow(segment[0]);
  contact->box.grow(segment[1]);
  if (contact->lines.size() < 1000) contact->lines.push_back(segment);
}

// Adds the overlap of one pair of faces to the contact of their surfaces.
void merge_overlap(const FaceContact& overlap, FaceContact* contact) {
  contact->centre = (contact->centre * contact->area + overlap.centre * overlap.area) /
                    (contact->area + overlap.area);
  contact->area += overlap.area;
  contact->box.grow(overlap.box.lo);
  contact->box.grow(overlap.box.hi);
  for (const auto& piece : overlap.pieces)
    if (contact->pieces.size() < 1000) contact->pieces.push_back(piece);
}

std::vector<Face> contact_faces(const Scene& scene) {
  std::vector<Face> faces;
  faces.reserve(scene.triangles.size());
  for (std::uint32_t t = 0; t < scene.triangles.size(); ++t) {
    Face f;
    f.triangle = t;
    f.n = scene.normal(t);
    f.d = dot(f.n, scene.vertices[scene.triangles[t].v[0]]);
    for (std::uint32_t v : scene.triangles[t].v) f.box.grow(scene.vertices[v]);
    faces.push_back(f);
  }
  return faces;
}

}  // namespace

std::vector<GapRun> gap_runs(const Scene& scene) {
  const std::vector<std::uint32_t> weld = mesh_detail::weld_by_position(scene.vertices);
  // Edge (welded ends, ascending) -> uses, and a vertex pair and surface of its last use.
  struct Use {
    std::uint32_t count = 0, a = 0, b = 0, surface = 0;
  };
  std::map<std::pair<std::uint32_t, std::uint32_t>, Use> edges;
  for (const Triangle& t : scene.triangles) {
    for (int k = 0; k < 3; ++k) {
      std::uint32_t a = weld[t.v[k]], b = weld[t.v[(k + 1) % 3]];
      if (a == b) continue;
      Use& use = edges[{std::min(a, b), std::max(a, b)}];
      ++use.count;
      use.a = t.v[k];
      use.b = t.v[(k + 1) % 3];
      use.surface = t.surface;
    }
  }
  std::vector<std::uint32_t> parent(scene.vertices.size());
  std::iota(parent.begin(), parent.end(), 0u);
  for (const auto& [key, use] : edges)
    if (use.count == 1) parent[find_root(parent, key.first)] = find_root(parent, key.second);
  std::unordered_map<std::uint32_t, std::size_t> run_of;
  std::vector<GapRun> runs;
  for (const auto& [key, use] : edges) {
    if (use.count != 1) continue;
    const std::uint32_t root = find_root(parent, key.first);
    auto it = run_of.emplace(root, runs.size()).first;
    if (it->second == runs.size()) runs.emplace_back();
    GapRun& run = runs[it->second];
    const Vec3 &a = scene.vertices[use.a], &b = scene.vertices[use.b];
    run.edges.push_back({a, b});
    run.length += norm(b - a);
    run.box.grow(a);
    run.box.grow(b);
    if (std::find(run.surfaces.begin(), run.surfaces.end(), use.surface) == run.surfaces.end())
      run.surfaces.push_back(use.surface);
  }
  for (GapRun& run : runs) std::sort(run.surfaces.begin(), run.surfaces.end());
  std::stable_sort(runs.begin(), runs.end(),
                   [](const GapRun& x, const GapRun& y) { return x.length > y.length; });
  return runs;
}

std::vector<FaceContact> face_contacts(const Scene& scene, double relative_tolerance) {
  const double diagonal = scene.bounds.diagonal();
  const double tol = relative_tolerance * diagonal;
  const double min_area = relative_tolerance * diagonal * diagonal;
  std::vector<Face> faces = contact_faces(scene);
  // Sweep along the longest side of the scene: faces sorted by their low end, each compared
  // with those starting before its high end.
  const int axis = largest_axis(scene.bounds.extent());
  std::sort(faces.begin(), faces.end(), [axis](const Face& a, const Face& b) {
    return a.box.lo[axis] < b.box.lo[axis] ||
           (a.box.lo[axis] == b.box.lo[axis] && a.triangle < b.triangle);
  });
  std::map<std::tuple<std::uint32_t, std::uint32_t, ContactKind>, FaceContact> found;
  for (std::size_t i = 0; i < faces.size(); ++i) {
    const Face& f = faces[i];
    const std::uint32_t sf = scene.triangles[f.triangle].surface;
    for (std::size_t j = i + 1; j < faces.size() && faces[j].box.lo[axis] <= f.box.hi[axis] + tol;
         ++j) {
      const Face& g = faces[j];
      const std::uint32_t sg = scene.triangles[g.triangle].surface;
      if (sf == sg || !boxes_meet(f.box, g.box, tol)) continue;
      const double c = dot(f.n, g.n);
      const std::uint32_t a = std::min(sf, sg), b = std::max(sf, sg);
      if (std::fabs(c) < 1 - 1e-9) {
        std::array<Vec3, 2> segment;
        if (crossing(scene, f, g, tol, &segment))
          add_crossing(segment, &found[{a, b, ContactKind::crossing}]);
        continue;
      }
      bool in_plane = true;
      for (std::uint32_t v : scene.triangles[g.triangle].v)
        in_plane = in_plane && std::fabs(dot(f.n, scene.vertices[v]) - f.d) <= tol;
      FaceContact overlap;
      if (!in_plane || !add_overlap(scene, f, g, min_area, &overlap)) continue;
      merge_overlap(overlap, &found[{a, b, c < 0 ? ContactKind::touching : ContactKind::doubled}]);
    }
  }
  for (auto& [key, contact] : found) {
    contact.surface_a = std::get<0>(key);
    contact.surface_b = std::get<1>(key);
    contact.kind = std::get<2>(key);
  }
  std::vector<FaceContact> out;
  for (auto& entry : found) out.push_back(std::move(entry.second));
  std::stable_sort(out.begin(), out.end(), [](const FaceContact& x, const FaceContact& y) {
    const bool cx = x.kind == ContactKind::crossing, cy = y.kind == ContactKind::crossing;
    if (cx != cy) return cy;
    return cx ? x.length > y.length : x.area > y.area;
  });
  return out;
}

std::string point_text(const Vec3& p) {
  auto c = [](double v) { return rounded("%.4g", std::fabs(v) < 1e-6 ? 0.0 : v); };
  return "(" + c(p.x) + ", " + c(p.y) + ", " + c(p.z) + ") m";
}

std::string gap_sentence(const Scene& scene, const GapRun& gap) {
  std::vector<std::string> names;
  for (std::uint32_t s : gap.surfaces) names.push_back("'" + scene.surfaces[s].name + "'");
  return std::to_string(gap.edges.size()) + " edge(s), " + rounded("%.4g", gap.length) +
         " m long, from " + point_text(gap.box.lo) + " to " + point_text(gap.box.hi) +
         ", edges of " + join_at_most(names, 6);
}

std::string contact_sentence(const Scene& scene, const FaceContact& contact) {
  const std::string a = "'" + scene.surfaces[contact.surface_a].name + "'";
  const std::string b = "'" + scene.surfaces[contact.surface_b].name + "'";
  const std::string span =
      " (from " + point_text(contact.box.lo) + " to " + point_text(contact.box.hi) + ")";
  if (contact.kind == ContactKind::crossing) {
    return "surfaces " + a + " and " + b + " cut through each other along " +
           rounded("%.3g", contact.length) + " m around " + point_text(contact.centre) + span +
           ": one solid sticks into the other, so faces lie inside a solid where rays start "
           "and end on back faces. Export the outer skin of the solids together (a boolean "
           "union), or move them apart so that they only touch";
  }
  const std::string where =
      rounded("%.3g", contact.area) + " m2 around " + point_text(contact.centre) + span;
  if (contact.kind == ContactKind::touching) {
    return "surfaces " + a + " and " + b + " touch face to face over " + where +
           ": the solids were exported touching, so rays start inside one of them and end on "
           "the back of its faces. Export only the faces that see the enclosure (cut the "
           "covered part out of the one and drop the hidden face of the other, e.g. by a "
           "boolean union of the solids), or leave a gap of a few millimetres between them";
  }
  return "surfaces " + a + " and " + b + " lie on each other over " + where +
         " with their fronts the same way: the same face is in the mesh twice. Delete one of "
         "the two copies";
}

}  // namespace hearthray
