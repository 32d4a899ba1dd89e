// Sampling routines for the Monte Carlo view factors, each with its density and its inverse
// (tested in tests/test_sampling.cpp). Random numbers come from a counter-based hash of
// (seed, patch, ray index): no random state crosses threads, so results do not depend on the
// thread count or on the order in which work runs.
#pragma once

#include <array>
#include <cstdint>

#include "hearthray/geometry.hpp"

namespace hearthray {

inline constexpr double kPi = 3.14159265358979323846;

// SplitMix64 finalizer (Steele, Lea & Flood, "Fast splittable pseudorandom number
// generators", OOPSLA 2014): a bijective 64-bit mix with good avalanche.
constexpr std::uint64_t mix64(std::uint64_t z) {
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
  return z ^ (z >> 31);
}

// Key of the random stream of one patch.
constexpr std::uint64_t patch_stream_key(std::uint64_t seed, std::uint64_t patch) {
  return mix64(mix64(seed ^ 0x6a09e667f3bcc909ull) + patch * 0x9e3779b97f4a7c15ull);
}

// Four independent uniforms in [0,1) for ray `index` of the stream `key`.
inline std::array<double, 4> ray_uniforms(std::uint64_t key, std::uint64_t index) {
  const std::uint64_t a = mix64(key + (2 * index + 1) * 0x9e3779b97f4a7c15ull);
  const std::uint64_t b = mix64(a ^ 0xd1b54a32d192ed03ull);
  constexpr double k32 = 1.0 / 4294967296.0;
  return {double(a >> 32) * k32, double(a & 0xffffffffu) * k32, double(b >> 32) * k32,
          double(b & 0xffffffffu) * k32};
}

// Uniform point on a triangle: barycentric weights (b1, b2) of vertices 1 and 2 from (u1, u2)
// with the square-root map (Shirley, "Realistic ray tracing", 2000; Pharr, Jakob & Humphreys,
// PBR 4th ed. sec. A.5.5 in its first form). Density 1/area on the triangle.
struct Barycentric {
  double b1 = 0, b2 = 0;
};
Barycentric sample_triangle_uniform(double u1, double u2);
std::array<double, 2> invert_triangle_uniform(const Barycentric& b);

// Cosine-weighted direction on the hemisphere around +z by Malley's method: a uniform point
// on the unit disk (polar map) lifted to the hemisphere. Density cos(theta)/pi per steradian.
Vec3 sample_cosine_hemisphere(double u1, double u2);
double cosine_hemisphere_pdf(const Vec3& local_direction);
std::array<double, 2> invert_cosine_hemisphere(const Vec3& local_direction);

// sin and cos of 2*pi*u for u in [0,1), a polynomial with |error| < 1e-10: the sampler's
// one trigonometric call, kept cheap as rays are.
void sincos_2pi(double u, double* s, double* c);

// Right-handed orthonormal basis (t, b, n) around the unit vector n (Duff et al., "Building
// an orthonormal basis, revisited", JCGT 6(1), 2017, listing 3).
void orthonormal_basis(const Vec3& n, Vec3* t, Vec3* b);

}  // namespace hearthray
