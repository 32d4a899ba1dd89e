#include <algorithm>
#include <cmath>
#include <limits>

#include "hearthray/error.hpp"
#include "hearthray/gas_zones.hpp"

namespace hearthray {

ZoneGrid::ZoneGrid(const Box3& box, std::array<int, 3> cells) : box_(box), n_(cells) {
  for (int a = 0; a < 3; ++a) {
    if (cells[a] < 1 || cells[a] > 1000)
      throw InputError("gas zones: cells along each axis must be 1 to 1000");
    if (!(box.hi[a] > box.lo[a]))
      throw InputError("gas zones: the enclosure has no extent along one axis");
  }
  const Vec3 e = box.extent();
  size_ = {e.x / n_[0], e.y / n_[1], e.z / n_[2]};
}

std::array<int, 3> ZoneGrid::cell_index(std::size_t cell) const {
  const int i = int(cell % n_[0]);
  const int j = int((cell / n_[0]) % n_[1]);
  const int k = int(cell / (std::size_t(n_[0]) * n_[1]));
  return {i, j, k};
}

Box3 ZoneGrid::cell_box(std::size_t cell) const {
  const auto c = cell_index(cell);
  Box3 b;
  b.lo = {box_.lo.x + c[0] * size_.x, box_.lo.y + c[1] * size_.y, box_.lo.z + c[2] * size_.z};
  b.hi = {box_.lo.x + (c[0] + 1) * size_.x, box_.lo.y + (c[1] + 1) * size_.y,
          box_.lo.z + (c[2] + 1) * size_.z};
  if (c[0] == n_[0] - 1) b.hi.x = box_.hi.x;  // no rounding gap at the far faces
  if (c[1] == n_[1] - 1) b.hi.y = box_.hi.y;
  if (c[2] == n_[2] - 1) b.hi.z = box_.hi.z;
  return b;
}

void ZoneGrid::walk(const Vec3& o, const Vec3& d, double t_max, std::vector<Stretch>* out) const {
  // Amanatides & Woo (1987): step from cell to cell across the nearest cell face.
  out->clear();
  constexpr double kInf = std::numeric_limits<double>::infinity();
  int idx[3], step[3];
  double t_next[3], t_delta[3];
  for (int a = 0; a < 3; ++a) {
    const double h = size_[a], lo = box_.lo[a];
    idx[a] = std::min(std::max(int(std::floor((o[a] - lo) / h)), 0), n_[a] - 1);
    if (d[a] > 0) {
      step[a] = 1;
      t_next[a] = (lo + (idx[a] + 1) * h - o[a]) / d[a];
      t_delta[a] = h / d[a];
    } else if (d[a] < 0) {
      step[a] = -1;
      t_next[a] = (lo + idx[a] * h - o[a]) / d[a];
      t_delta[a] = -h / d[a];
    } else {
      step[a] = 0;
      t_next[a] = kInf;
      t_delta[a] = kInf;
    }
    // An origin clamped into the grid (outside the box by rounding) may face a crossing
    // "behind" it: that crossing is at t <= 0 and is taken at once.
  }
  for (;;) {
    const std::uint32_t cell =
        std::uint32_t(idx[0] + std::size_t(n_[0]) * (idx[1] + std::size_t(n_[1]) * idx[2]));
    const int a =
        t_next[0] < t_next[1] ? (t_next[0] < t_next[2] ? 0 : 2) : (t_next[1] < t_next[2] ? 1 : 2);
    const double end = std::min(t_next[a], t_max);
    if (!out->empty() && out->back().cell == cell)
      out->back().end = std::max(out->back().end, end);
    else
      out->push_back({cell, std::max(end, 0.0)});
    if (t_next[a] >= t_max) break;
    const int next = idx[a] + step[a];
    if (next < 0 || next >= n_[a]) {  // leaves the grid before t_max: rounding at the wall
      out->back().end = t_max;
      break;
    }
    idx[a] = next;
    t_next[a] += t_delta[a];
  }
}

double gas_volume_by_divergence(const Scene& scene) {
  // V = (1/3) sum over the boundary of x . n dA with n pointing out of the gas; fronts face
  // the gas, so n = -front normal: V = -(1/6) sum v0 . (v1 x v2) over one-sided triangles.
  // Coordinates relative to the box centre, to keep the sum well conditioned.
  const Vec3 c = (scene.bounds.lo + scene.bounds.hi) * 0.5;
  double sum = 0;
  for (const Triangle& t : scene.triangles) {
    if (scene.surfaces[t.surface].two_sided) continue;
    const Vec3 a = scene.vertices[t.v[0]] - c, b = scene.vertices[t.v[1]] - c,
               e = scene.vertices[t.v[2]] - c;
    sum += dot(a, cross(b, e));
  }
  return -sum / 6;
}

}  // namespace hearthray
