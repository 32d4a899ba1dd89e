// Small fixed-size vector used by the scene and the samplers (double precision; the tracer
// converts to float at its boundary).
#pragma once

#include <cmath>

namespace hearthray {

struct Vec3 {
  double x = 0, y = 0, z = 0;

  constexpr Vec3() = default;
  constexpr Vec3(double x_, double y_, double z_) : x(x_), y(y_), z(z_) {}

  constexpr double operator[](int i) const { return i == 0 ? x : (i == 1 ? y : z); }
  constexpr Vec3 operator+(const Vec3& o) const { return {x + o.x, y + o.y, z + o.z}; }
  constexpr Vec3 operator-(const Vec3& o) const { return {x - o.x, y - o.y, z - o.z}; }
  constexpr Vec3 operator-() const { return {-x, -y, -z}; }
  constexpr Vec3 operator*(double s) const { return {x * s, y * s, z * s}; }
  constexpr Vec3 operator/(double s) const { return {x / s, y / s, z / s}; }
  Vec3& operator+=(const Vec3& o) {
    x += o.x;
    y += o.y;
    z += o.z;
    return *this;
  }
  constexpr bool operator==(const Vec3& o) const { return x == o.x && y == o.y && z == o.z; }
};

constexpr Vec3 operator*(double s, const Vec3& v) {
  return v * s;
}
constexpr double dot(const Vec3& a, const Vec3& b) {
  return a.x * b.x + a.y * b.y + a.z * b.z;
}
constexpr Vec3 cross(const Vec3& a, const Vec3& b) {
  return {a.y * b.z - a.z * b.y, a.z * b.x - a.x * b.z, a.x * b.y - a.y * b.x};
}
inline double norm(const Vec3& v) {
  return std::sqrt(dot(v, v));
}
inline Vec3 normalized(const Vec3& v) {
  return v / norm(v);
}
inline bool is_finite(const Vec3& v) {
  return std::isfinite(v.x) && std::isfinite(v.y) && std::isfinite(v.z);
}

// Axis-aligned bounding box.
struct Box3 {
  Vec3 lo{INFINITY, INFINITY, INFINITY};
  Vec3 hi{-INFINITY, -INFINITY, -INFINITY};
  void grow(const Vec3& p) {
    lo = {std::fmin(lo.x, p.x), std::fmin(lo.y, p.y), std::fmin(lo.z, p.z)};
    hi = {std::fmax(hi.x, p.x), std::fmax(hi.y, p.y), std::fmax(hi.z, p.z)};
  }
  Vec3 extent() const { return hi - lo; }
  double diagonal() const { return norm(extent()); }
};

}  // namespace hearthray
