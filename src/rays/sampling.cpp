#include "hearthray/sampling.hpp"

#include <algorithm>
#include <cmath>

namespace hearthray {

std::array<double, 2> invert_triangle_uniform(const Barycentric& b) {
  // Undo the two branches of sample_triangle_uniform: u1 >= u2 gives b1 >= b2.
  if (b.b1 >= b.b2) return {b.b1 + b.b2, 2 * b.b2};
  return {2 * b.b1, b.b2 + b.b1};
}

double cosine_hemisphere_pdf(const Vec3& d) {
  return d.z > 0 ? d.z / kPi : 0.0;
}

std::array<double, 2> invert_cosine_hemisphere(const Vec3& d) {
  const double u1 = d.x * d.x + d.y * d.y;
  double phi = std::atan2(d.y, d.x);
  if (phi < 0) phi += 2 * kPi;
  return {u1, phi / (2 * kPi)};
}

void orthonormal_basis(const Vec3& n, Vec3* t, Vec3* b) {
  const double sign = std::copysign(1.0, n.z);
  const double a = -1.0 / (sign + n.z);
  const double bb = n.x * n.y * a;
  *t = {1.0 + sign * n.x * n.x * a, sign * bb, -sign * n.x};
  *b = {bb, sign + n.y * n.y * a, -n.y};
}

}  // namespace hearthray
