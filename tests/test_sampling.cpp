// Sampling routines: densities, inverses and distributions. Exact statements (round trips,
// normalisation) are checked to round-off; distributions by chi-square with fixed seeds.
#include <catch2/catch.hpp>
#include <cmath>

#include "hearthray/sampling.hpp"

using namespace hearthray;

namespace {

// Pearson chi-square statistic of observed counts against equal expected counts.
double chi_square(const std::vector<std::uint64_t>& counts, double expected) {
  double x2 = 0;
  for (auto c : counts) x2 += (double(c) - expected) * (double(c) - expected) / expected;
  return x2;
}

// Upper 0.1 % point of chi-square with k degrees of freedom, Wilson-Hilferty approximation
// (Wilson & Hilferty, PNAS 17, 1931), z = 3.09 for 0.999.
double chi_square_limit(int k) {
  const double z = 3.09, a = 2.0 / (9.0 * k);
  return k * std::pow(1 - a + z * std::sqrt(a), 3);
}

}  // namespace

TEST_CASE("sin and cos of 2 pi u agree with the library to 4e-7", "[sampling]") {
  double worst = 0;
  for (int i = 0; i <= 100000; ++i) {
    const double u = i / 100000.0 * 0.999999999;
    double s, c;
    sincos_2pi(u, &s, &c);
    worst = std::max(
        {worst, std::fabs(s - std::sin(2 * kPi * u)), std::fabs(c - std::cos(2 * kPi * u))});
  }
  CHECK(worst < 4e-7);
}

TEST_CASE("triangle sampling inverts and covers the triangle uniformly", "[sampling]") {
  for (double u1 : {0.0, 0.1, 0.5, 0.99}) {
    for (double u2 : {0.0, 0.3, 0.75}) {
      const Barycentric b = sample_triangle_uniform(u1, u2);
      CHECK(b.b1 >= 0);
      CHECK(b.b2 >= 0);
      CHECK(b.b1 + b.b2 <= 1 + 1e-15);
      const auto u = invert_triangle_uniform(b);
      CHECK(u[0] == Approx(u1).margin(1e-14));
      CHECK(u[1] == Approx(u2).margin(1e-14));
    }
  }
  // Uniformity: split the unit right triangle into 4 congruent sub-triangles by its edge
  // midpoints, each holding 1/4 of the area; and into 16 by quarter points.
  const std::uint64_t key = patch_stream_key(7, 0);
  std::vector<std::uint64_t> counts(16, 0);
  const int n = 160000;
  for (int i = 0; i < n; ++i) {
    const auto u = ray_uniforms(key, i);
    const Barycentric b = sample_triangle_uniform(u[0], u[1]);
    // Sub-triangle index on a 4x4 grid of the triangle (b1, b2 >= 0, b1 + b2 <= 1).
    const double x = b.b1 * 4, y = b.b2 * 4;
    const int ix = std::min(3, int(x)), iy = std::min(3, int(y));
    const bool upper = (x - ix) + (y - iy) > 1;
    // Row iy has 2*(4-iy)-1 sub-triangles; map (ix, iy, upper) to a dense index.
    int index = 0;
    for (int r = 0; r < iy; ++r) index += 2 * (4 - r) - 1;
    index += 2 * ix + (upper ? 1 : 0);
    REQUIRE(index < 16);
    ++counts[index];
  }
  CHECK(chi_square(counts, n / 16.0) < chi_square_limit(15));
}

TEST_CASE("cosine hemisphere: unit directions, density, inverse", "[sampling]") {
  for (double u1 : {0.0, 0.2, 0.5, 0.95}) {
    for (double u2 : {0.0, 0.25, 0.6, 0.999}) {
      const Vec3 d = sample_cosine_hemisphere(u1, u2);
      CHECK(norm(d) == Approx(1.0).margin(1e-6));  // float square roots, as the rays
      CHECK(d.z >= 0);
      CHECK(cosine_hemisphere_pdf(d) == Approx(d.z / kPi));
      if (u1 > 0) {
        const auto u = invert_cosine_hemisphere(d);
        CHECK(u[0] == Approx(u1).margin(1e-6));
        CHECK(u[1] == Approx(u2).margin(1e-6));
      }
    }
  }
  CHECK(cosine_hemisphere_pdf({0, 0, -1}) == 0);
}

TEST_CASE("cosine hemisphere: chi-square against the exact cell probabilities", "[sampling]") {
  // Cells in (theta, phi): 8 rings of equal sin^2(theta) width (each holds 1/8 of the cosine
  // density: P(sin^2 theta < s) = s), times 8 equal sectors in phi.
  const std::uint64_t key = patch_stream_key(11, 3);
  std::vector<std::uint64_t> counts(64, 0);
  const int n = 256000;
  for (int i = 0; i < n; ++i) {
    const auto u = ray_uniforms(key, i);
    const Vec3 d = sample_cosine_hemisphere(u[0], u[1]);
    const double s2 = d.x * d.x + d.y * d.y;
    double phi = std::atan2(d.y, d.x);
    if (phi < 0) phi += 2 * kPi;
    const int ring = std::min(7, int(s2 * 8));
    const int sector = std::min(7, int(phi / (2 * kPi) * 8));
    ++counts[ring * 8 + sector];
  }
  CHECK(chi_square(counts, n / 64.0) < chi_square_limit(63));
}

TEST_CASE("mean cosine of the sampled directions is 2/3", "[sampling]") {
  // For the density cos(theta)/pi, E[cos theta] = 2/3 and Var = 1/2 - 4/9 = 1/18 (integrals
  // over the hemisphere, derived; no source needed).
  const std::uint64_t key = patch_stream_key(3, 1);
  const int n = 200000;
  double sum = 0;
  for (int i = 0; i < n; ++i) {
    const auto u = ray_uniforms(key, i);
    sum += sample_cosine_hemisphere(u[2], u[3]).z;
  }
  const double se = std::sqrt(1.0 / 18.0 / n);
  CHECK(std::fabs(sum / n - 2.0 / 3.0) < 4 * se);
}

TEST_CASE("orthonormal basis is right-handed and orthonormal", "[sampling]") {
  for (const Vec3 n : {Vec3{0, 0, 1}, Vec3{0, 0, -1}, normalized(Vec3{1, 2, 3}),
                       normalized(Vec3{-1e-9, 1, 0}), normalized(Vec3{0.3, -0.2, -0.9})}) {
    Vec3 t, b;
    orthonormal_basis(n, &t, &b);
    CHECK(norm(t) == Approx(1).margin(1e-12));
    CHECK(norm(b) == Approx(1).margin(1e-12));
    CHECK(std::fabs(dot(t, b)) < 1e-12);
    CHECK(std::fabs(dot(t, n)) < 1e-12);
    const Vec3 c = cross(t, b);
    CHECK(norm(c - n) < 1e-12);
  }
}

TEST_CASE("random streams differ by seed and patch and are uniform", "[sampling]") {
  CHECK(patch_stream_key(1, 0) != patch_stream_key(2, 0));
  CHECK(patch_stream_key(1, 0) != patch_stream_key(1, 1));
  const auto a = ray_uniforms(patch_stream_key(1, 0), 5);
  const auto b = ray_uniforms(patch_stream_key(1, 0), 5);
  CHECK(a == b);  // a pure function of (seed, patch, index)
  std::vector<std::uint64_t> counts(50, 0);
  const int n = 100000;
  for (int i = 0; i < n; ++i)
    for (double u : ray_uniforms(patch_stream_key(9, 4), i)) ++counts[std::min(49, int(u * 50))];
  CHECK(chi_square(counts, 4.0 * n / 50) < chi_square_limit(49));
}
