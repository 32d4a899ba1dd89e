#include "hearthray/sampling.hpp"

#include <algorithm>
#include <cmath>

namespace hearthray {

Barycentric sample_triangle_uniform(double u1, double u2) {
  const double s = std::sqrt(u1);
  return {u2 * s, s * (1.0 - u2)};
}

std::array<double, 2> invert_triangle_uniform(const Barycentric& b) {
  // s = b1 + b2 = sqrt(u1); u2 = b1 / s.
  const double s = b.b1 + b.b2;
  return {s * s, s > 0 ? b.b1 / s : 0.0};
}

void sincos_2pi(double u, double* s, double* c) {
  // Reduce 2*pi*u to a quadrant and x in [-1/2, 1/2) of a quarter turn, then Taylor
  // polynomials of sin(pi/2 x) and cos(pi/2 x), truncated where the next term is < 1e-10.
  const double q = u * 4.0;
  const double k = std::floor(q + 0.5);
  const double x = (q - k) * (kPi / 2);  // |x| <= pi/4
  const double x2 = x * x;
  const double sn =
      x * (1 + x2 * (-1.0 / 6 +
                     x2 * (1.0 / 120 + x2 * (-1.0 / 5040 + x2 * (1.0 / 362880 - x2 / 39916800)))));
  const double cs =
      1 + x2 * (-0.5 + x2 * (1.0 / 24 + x2 * (-1.0 / 720 + x2 * (1.0 / 40320 - x2 / 3628800))));
  switch (static_cast<int>(k) & 3) {
    case 0:
      *s = sn;
      *c = cs;
      break;
    case 1:
      *s = cs;
      *c = -sn;
      break;
    case 2:
      *s = -sn;
      *c = -cs;
      break;
    default:
      *s = -cs;
      *c = sn;
      break;
  }
}

Vec3 sample_cosine_hemisphere(double u1, double u2) {
  // Malley's method: r = sqrt(u1), phi = 2 pi u2 on the disk, z = sqrt(1 - r^2).
  double s, c;
  sincos_2pi(u2, &s, &c);
  const double r = std::sqrt(u1);
  return {r * c, r * s, std::sqrt(std::max(0.0, 1.0 - u1))};
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
