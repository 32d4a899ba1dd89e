// Owen-scrambled Sobol' points: the sequence's defining properties. First points against the
// values of Joe & Kuo's generator, (t, m, s)-net stratification of every elementary interval
// before and after scrambling, and uniformity of a scrambled point across seeds.
#include <catch2/catch.hpp>
#include <cmath>
#include <functional>
#include <vector>

#include "hearthray/sobol.hpp"

using namespace hearthray;

namespace {

// Whether points [0, 2^m) stratify every elementary interval of volume 2^(t-m) over the
// dimensions `dims` (first `dims` coordinates): each holds exactly 2^t points.
bool is_net(int m, int t, int dims, const std::vector<std::array<std::uint32_t, 4>>& x) {
  const int n = 1 << m;
  const int depth = m - t;  // sum of the digits d_j: boxes of side 2^-d_j
  std::vector<int> d(dims, 0);
  // Every composition of `depth` into `dims` non-negative parts.
  std::function<bool(int, int)> each = [&](int j, int left) -> bool {
    if (j == dims - 1) {
      d[j] = left;
      std::vector<int> count(std::size_t(1) << depth, 0);
      for (int i = 0; i < n; ++i) {
        std::uint64_t box = 0;
        for (int k = 0; k < dims; ++k)
          box = (box << d[k]) | (d[k] == 0 ? 0 : (x[i][k] >> (32 - d[k])));
        ++count[box];
      }
      for (int c : count)
        if (c != (1 << t)) return false;
      return true;
    }
    for (int v = 0; v <= left; ++v) {
      d[j] = v;
      if (!each(j + 1, left - v)) return false;
    }
    return true;
  };
  return each(0, depth);
}

std::vector<std::array<std::uint32_t, 4>> points(int n, const OwenSeeds* seeds) {
  std::vector<std::array<std::uint32_t, 4>> x(n);
  for (int i = 0; i < n; ++i) {
    x[i] = sobol_point(std::uint32_t(i));
    if (seeds)
      for (int d = 0; d < 4; ++d) x[i][d] = owen_scramble(x[i][d], seeds->s[d]);
  }
  return x;
}

}  // namespace

TEST_CASE("Sobol' first points match Joe and Kuo's generator", "[sobol]") {
  // First eight points of dimensions 1-3 printed by Joe & Kuo's sobol.cc with
  // new-joe-kuo-6.21201 (recalled).
  const double expected[8][3] = {{0, 0, 0},
                                 {0.5, 0.5, 0.5},
                                 {0.75, 0.25, 0.25},
                                 {0.25, 0.75, 0.75},
                                 {0.375, 0.375, 0.625},
                                 {0.875, 0.875, 0.125},
                                 {0.625, 0.125, 0.875},
                                 {0.125, 0.625, 0.375}};
  for (int i = 0; i < 8; ++i) {
    const auto x = sobol_point(std::uint32_t(i));
    for (int d = 0; d < 3; ++d) CHECK(x[d] / 4294967296.0 == expected[i][d]);
  }
  // Dimension 4 (x^3 + x + 1, m = 1 3 1): direction numbers m_k / 2^k = 1/2, 3/4, 1/8, so
  // point 1 (Gray code 1) is v1, point 2 (Gray code 3) is v1 ^ v2, point 3 (Gray code 2) is v2.
  CHECK(sobol_point(1)[3] / 4294967296.0 == 0.5);
  CHECK(sobol_point(3)[3] / 4294967296.0 == 0.75);  // Gray code of 3 is 2: v2
  CHECK(sobol_point(2)[3] / 4294967296.0 == 0.25);  // Gray code 3: v1 ^ v2
}

TEST_CASE("Sobol' points form (t, m, s)-nets: every elementary interval holds 2^t", "[sobol]") {
  // Sobol' (1967): the first 2^m points are a (t, m, s)-net in base 2 with t the sum of the
  // polynomial degrees minus one each: t = 0 for dimensions 0-1, 1 for 0-2, 3 for 0-3.
  const auto x = points(1 << 12, nullptr);
  for (int m = 0; m <= 12; ++m) {
    CHECK(is_net(m, 0, 2, x));
    CHECK(is_net(m, std::min(m, 1), 3, x));
    CHECK(is_net(m, std::min(m, 3), 4, x));
  }
  // And t cannot be lowered for 3 dimensions (t = 0 is impossible beyond 3 dimensions in
  // base 2 anyway; here the check shows the test can fail).
  CHECK_FALSE(is_net(8, 0, 3, x));
}

TEST_CASE("Owen scrambling keeps the net property for any seed", "[sobol]") {
  const auto x0 = points(1 << 10, nullptr);
  for (std::uint64_t key : {1ull, 2ull, 12345ull}) {
    const OwenSeeds seeds = owen_seeds(key);
    const auto x = points(1 << 10, &seeds);
    for (int m = 0; m <= 10; ++m) {
      CHECK(is_net(m, 0, 2, x));
      CHECK(is_net(m, std::min(m, 3), 4, x));
    }
    CHECK(x[1][0] != x0[1][0]);  // scrambled: points moved
  }
}

TEST_CASE("a scrambled Sobol' point is uniform across seeds", "[sobol]") {
  // Owen (1995): each point of a nested uniform scramble is uniform on the unit cube. Chi-square
  // of 16 bins per coordinate over 16000 seeds; 15 degrees of freedom, 0.1 % point 37.7
  // (standard chi-square table).
  for (std::uint32_t index : {0u, 1u, 5u, 1000u}) {
    for (int d = 0; d < 4; ++d) {
      std::vector<int> bins(16, 0);
      const int n = 16000;
      for (int k = 0; k < n; ++k) {
        const auto u = scrambled_sobol(index, owen_seeds(std::uint64_t(k) * 7919 + 3));
        ++bins[int(u[d] * 16)];
      }
      double x2 = 0;
      for (int c : bins) x2 += (c - n / 16.0) * (c - n / 16.0) / (n / 16.0);
      CHECK(x2 < 37.7);
    }
  }
}
