// Sampling routines for the Monte Carlo view factors, each with its density and its inverse
// (tested in tests/test_sampling.cpp). Random numbers come from a counter-based hash of
// (seed, patch, ray index): no random state crosses threads, so results do not depend on the
// thread count or on the order in which work runs.
#pragma once

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdint>

#include "hearthray/geometry.hpp"
#include "hearthray/hash.hpp"
#include "hearthray/units.hpp"  // kPi

namespace hearthray {

// Key of the random stream of one patch.
constexpr std::uint64_t patch_stream_key(std::uint64_t seed, std::uint64_t patch) {
  return mix64(mix64(seed ^ 0x6a09e667f3bcc909ull) + patch * 0x9e3779b97f4a7c15ull);
}

// Four independent uniforms in [0,1) for ray `index` of the stream `key`.
inline std::array<double, 4> ray_uniforms(std::uint64_t key, std::uint64_t index) {
  // Two independent hashes (no dependency chain between them).
  const std::uint64_t a = mix64(key + (2 * index + 1) * 0x9e3779b97f4a7c15ull);
  const std::uint64_t b = mix64(key + (2 * index + 2) * 0x9e3779b97f4a7c15ull);
  constexpr double k32 = 1.0 / 4294967296.0;
  return {double(a >> 32) * k32, double(a & 0xffffffffu) * k32, double(b >> 32) * k32,
          double(b & 0xffffffffu) * k32};
}

// Uniform point on a triangle: barycentric weights (b1, b2) of vertices 1 and 2 from (u1, u2)
// by the low-distortion map of Heitz ("A low-distortion map between triangle and square",
// 2019; also PBR 4th ed., SampleUniformTriangle): no square root, and strata of (u1, u2) stay
// compact on the triangle. Density 1/area on the triangle.
struct Barycentric {
  double b1 = 0, b2 = 0;
};
inline Barycentric sample_triangle_uniform(double u1, double u2) {
  // Selects, not branches: which half a ray falls in is a coin toss the CPU cannot predict.
  const bool lower = u1 < u2;
  const double h1 = 0.5 * u1, h2 = 0.5 * u2;
  return {lower ? h1 : u1 - h2, lower ? u2 - h1 : h2};
}
std::array<double, 2> invert_triangle_uniform(const Barycentric& b);

// Cosine-weighted direction on the hemisphere around +z by Malley's method: a uniform point
// on the unit disk (polar map) lifted to the hemisphere. Density cos(theta)/pi per steradian.
inline Vec3 sample_cosine_hemisphere(double u1, double u2);
double cosine_hemisphere_pdf(const Vec3& local_direction);
std::array<double, 2> invert_cosine_hemisphere(const Vec3& local_direction);

// sin and cos of 2*pi*u for u in [0,1), polynomials with |error| < 4e-7 (the directions they
// make are rounded to float, 6e-8, and the density error is of the same order): the
// sampler's one trigonometric call, kept cheap as rays are.
inline void sincos_2pi(double u, double* s, double* c) {
  // Reduce 2*pi*u to a quadrant and x in [-pi/4, pi/4], then Taylor polynomials of sin x and
  // cos x, truncated where the next term is below 4e-7. Inline: it runs once per ray.
  // k = floor(q + 0.5) as a truncation, q + 0.5 being positive: the same value, and a loop
  // over rays calling this is vectorised without SSE4.1's rounding (emitter_sampling.cpp).
  const double q = u * 4.0;
  const double k = double(static_cast<std::int32_t>(q + 0.5));
  const double x = (q - k) * (kPi / 2);
  const double x2 = x * x;
  const double sn = x * (1 + x2 * (-1.0 / 6 + x2 * (1.0 / 120 - x2 / 5040)));
  const double cs = 1 + x2 * (-0.5 + x2 * (1.0 / 24 + x2 * (-1.0 / 720 + x2 / 40320)));
  // Quadrant q: sin(q pi/2 + x) and cos(q pi/2 + x), by selects rather than branches.
  const int quadrant = static_cast<int>(k) & 3;
  const double s_abs = (quadrant & 1) ? cs : sn;
  const double c_abs = (quadrant & 1) ? sn : cs;
  *s = (quadrant & 2) ? -s_abs : s_abs;
  *c = ((quadrant + 1) & 2) ? -c_abs : c_abs;
}

inline Vec3 sample_cosine_hemisphere(double u1, double u2) {
  // Malley's method: r = sqrt(u1), phi = 2 pi u2 on the disk, z = sqrt(1 - r^2). The square
  // roots are taken in float, the precision of the rays they feed (a double root costs about
  // twice as much, on every ray).
  double s, c;
  sincos_2pi(u2, &s, &c);
  const double r = std::sqrt(static_cast<float>(u1));
  return {r * c, r * s, std::sqrt(static_cast<float>(std::max(0.0, 1.0 - u1)))};
}

// Right-handed orthonormal basis (t, b, n) around the unit vector n (Duff et al., "Building
// an orthonormal basis, revisited", JCGT 6(1), 2017, listing 3).
void orthonormal_basis(const Vec3& n, Vec3* t, Vec3* b);

}  // namespace hearthray
