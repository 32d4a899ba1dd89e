// Smoothing at sizes where the matrix-free path runs: the iterative (conjugate-gradient) and the
// direct (dense LDL^T) Newton solves must reach the same maximum-likelihood answer (Daun, Morton
// & Howell 2005), and the result must not depend on the thread count. The enclosure is
// synthetic: random reciprocal exchange areas with exact row sums (common practice for such
// checks, no published source), counts drawn ray by ray with a fixed seed.
#include <tbb/global_control.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <cstdint>
#include <random>
#include <string>
#include <vector>

#include "hearthray/error.hpp"
#include "hearthray/smoothing.hpp"

using namespace hearthray;

namespace {

// Uniform in (0, 1] from the raw 64-bit output: the same on every platform.
double uniform(std::mt19937_64& rng) {
  return (static_cast<double>(rng() >> 11) + 1) * 0x1p-53;
}

struct Case {
  PatchSet patches;
  Tallies tallies;
  std::vector<std::vector<double>> exact_f;  // dense n x n, exact factors
};

// n patches that all see one another with exchange areas uniform in [0.2, 1.8]; every fifth
// patch also loses a little to the surroundings. A_i is the row sum, so the exact factors are
// reciprocal and close. Each patch emits `rays` rays, each landing on receiver j with
// probability F_ij (inverse-CDF sampling), so many pairs get no ray and stay structural zeros.
Case random_enclosure(std::size_t n, std::uint64_t rays, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::vector<std::vector<double>> S(n, std::vector<double>(n, 0.0));
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = i + 1; j < n; ++j) S[i][j] = S[j][i] = 0.2 + 1.6 * uniform(rng);
  }
  Case c;
  c.tallies.patch_count = n;
  c.exact_f.assign(n, std::vector<double>(n, 0.0));
  std::vector<double> cumulative(n + 1);
  for (std::size_t i = 0; i < n; ++i) {
    const double loss = i % 5 == 0 ? 20 * uniform(rng) : 0.0;
    double area = 0;
    for (std::size_t j = 0; j < n; ++j) {
      area += S[i][j];
      cumulative[j] = area;
    }
    area += loss;
    cumulative[n] = area;
    Patch p;
    p.name = "p" + std::to_string(i);
    p.area = area;
    c.patches.patches.push_back(p);
    for (std::size_t j = 0; j < n; ++j) c.exact_f[i][j] = S[i][j] / area;
    std::vector<std::uint64_t> counts(n + 1, 0);
    for (std::uint64_t r = 0; r < rays; ++r) {
      const double u = uniform(rng) * area;
      const auto k = static_cast<std::size_t>(
          std::lower_bound(cumulative.begin(), cumulative.end(), u) - cumulative.begin());
      ++counts[std::min(k, n)];
    }
    for (std::size_t j = 0; j < n; ++j) {
      if (counts[j] == 0) continue;
      c.tallies.hit_patch.push_back(static_cast<std::uint32_t>(j));
      c.tallies.hit_count.push_back(counts[j]);
    }
    c.tallies.hit_offset.push_back(c.tallies.hit_patch.size());
    c.tallies.rays.push_back(rays);
    c.tallies.escaped.push_back(counts[n]);
    c.tallies.back_face.push_back(0);
  }
  return c;
}

ViewFactors smooth_with(const Case& c, SmoothingOptions::Solver solver, SmoothingSummary* s) {
  SmoothingOptions options;
  options.solver = solver;
  return smooth_view_factors(c.patches, c.tallies, options, s);
}

}  // namespace

TEST_CASE("smoothing: iterative and direct Newton solves agree on 640 patches", "[smoothing]") {
  // About 200k pairs: the matrix-free passes run in several blocks.
  const Case c = random_enclosure(640, 3000, 8);
  SmoothingSummary direct_summary, iterative_summary;
  const ViewFactors direct = smooth_with(c, SmoothingOptions::Solver::direct, &direct_summary);
  const ViewFactors iterative =
      smooth_with(c, SmoothingOptions::Solver::iterative, &iterative_summary);
  INFO(direct_summary.message);
  INFO(iterative_summary.message);
  REQUIRE(direct_summary.converged);
  REQUIRE(iterative_summary.converged);
  CHECK(direct_summary.linear_iterations == 0);
  CHECK(iterative_summary.linear_iterations > 0);
  CHECK(iterative_summary.max_row_error <= 1e-12);
  CHECK(iterative_summary.max_reciprocity_error <= 1e-12);

  // Same pattern (the counts' own), same values.
  REQUIRE(direct.F.nonZeros() == iterative.F.nonZeros());
  const auto entries = static_cast<std::size_t>(direct.F.nonZeros());
  CHECK(std::equal(direct.F.outerIndexPtr(), direct.F.outerIndexPtr() + direct.F.rows() + 1,
                   iterative.F.outerIndexPtr()));
  CHECK(std::equal(direct.F.innerIndexPtr(), direct.F.innerIndexPtr() + entries,
                   iterative.F.innerIndexPtr()));
  double worst = 0, worst_loss = 0, smallest = 1;
  for (std::size_t k = 0; k < entries; ++k) {
    const double a = direct.F.valuePtr()[k], b = iterative.F.valuePtr()[k];
    smallest = std::min({smallest, a, b});
    worst = std::max(worst, std::abs(a - b) / a);
  }
  for (std::size_t i = 0; i < direct.size(); ++i) {
    worst_loss =
        std::max(worst_loss, std::abs(direct.to_surroundings[i] - iterative.to_surroundings[i]));
  }
  CAPTURE(worst, worst_loss, smallest);
  CHECK(smallest > 0);
  CHECK(worst <= 1e-10);
  CHECK(worst_loss <= 1e-10);
  CHECK(iterative.max_correction_sigma == Approx(direct.max_correction_sigma).epsilon(1e-9));

  // And the answer is worth having: closer to the exact factors than the raw estimate.
  const ViewFactors raw = raw_view_factors(c.patches, c.tallies);
  const Eigen::MatrixXd smooth_dense(iterative.F), raw_dense(raw.F);
  double raw_sse = 0, smooth_sse = 0;
  for (std::size_t i = 0; i < c.exact_f.size(); ++i) {
    for (std::size_t j = 0; j < c.exact_f.size(); ++j) {
      const auto ii = static_cast<Eigen::Index>(i), jj = static_cast<Eigen::Index>(j);
      raw_sse += std::pow(raw_dense(ii, jj) - c.exact_f[i][j], 2);
      smooth_sse += std::pow(smooth_dense(ii, jj) - c.exact_f[i][j], 2);
    }
  }
  CAPTURE(raw_sse, smooth_sse);
  CHECK(smooth_sse < 0.8 * raw_sse);
}

TEST_CASE("smoothing gives bitwise the same result on one thread and on all", "[smoothing]") {
  const Case c = random_enclosure(640, 2000, 21);
  SmoothingSummary one_summary, all_summary;
  ViewFactors one;
  {
    tbb::global_control single(tbb::global_control::max_allowed_parallelism, 1);
    one = smooth_with(c, SmoothingOptions::Solver::iterative, &one_summary);
  }
  const ViewFactors all = smooth_with(c, SmoothingOptions::Solver::iterative, &all_summary);
  REQUIRE(one_summary.converged);
  CHECK(one_summary.iterations == all_summary.iterations);
  CHECK(one_summary.linear_iterations == all_summary.linear_iterations);
  CHECK(one_summary.message == all_summary.message);
  REQUIRE(one.F.nonZeros() == all.F.nonZeros());
  const auto entries = static_cast<std::size_t>(one.F.nonZeros());
  CHECK(std::equal(one.F.valuePtr(), one.F.valuePtr() + entries, all.F.valuePtr()));
  CHECK(std::equal(one.F.innerIndexPtr(), one.F.innerIndexPtr() + entries, all.F.innerIndexPtr()));
  CHECK(one.to_surroundings == all.to_surroundings);
  CHECK(one.max_correction_sigma == all.max_correction_sigma);
}

TEST_CASE("smoothing lays out each pair in both rows, on the pattern of the counts",
          "[smoothing]") {
  // The finished matrix is written in place, the entries left of the diagonal by blocks of
  // destination rows (16 blocks of about 40 rows here). Every pair that exchanged a ray either
  // way must appear in both rows, columns ascending, nothing else but the self hits, and the
  // two entries must be the one exchange area divided by either area: A_i F_ij = A_j F_ji to
  // a few units in the last place.
  const Case c = random_enclosure(640, 2000, 21);
  SmoothingSummary summary;
  const ViewFactors vf = smooth_with(c, SmoothingOptions::Solver::iterative, &summary);
  REQUIRE(summary.converged);
  const std::size_t n = c.patches.size();
  std::vector<std::vector<bool>> expected(n, std::vector<bool>(n, false));
  const Tallies& t = c.tallies;
  for (std::size_t i = 0; i < n; ++i) {
    for (std::uint64_t k = t.hit_offset[i]; k < t.hit_offset[i + 1]; ++k) {
      if (t.hit_count[k] == 0) continue;
      expected[i][t.hit_patch[k]] = expected[t.hit_patch[k]][i] = true;
    }
  }
  const auto& F = vf.F;
  std::size_t stored = 0, unexpected = 0, unordered = 0;
  double worst = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const auto row = static_cast<Eigen::Index>(i);
    for (auto k = F.outerIndexPtr()[i]; k < F.outerIndexPtr()[i + 1]; ++k) {
      const auto j = static_cast<std::size_t>(F.innerIndexPtr()[k]);
      if (k > F.outerIndexPtr()[i] && F.innerIndexPtr()[k - 1] >= F.innerIndexPtr()[k]) {
        ++unordered;
      }
      if (!expected[i][j]) ++unexpected;
      ++stored;
      const double s_ij = vf.areas[i] * F.valuePtr()[k];
      const double s_ji = vf.areas[j] * F.coeff(static_cast<Eigen::Index>(j), row);
      worst = std::max(worst, std::abs(s_ij - s_ji) / s_ij);
    }
  }
  std::size_t pattern = 0;
  for (const auto& row : expected)
    pattern += static_cast<std::size_t>(std::count(row.begin(), row.end(), true));
  CAPTURE(stored, pattern, unexpected, unordered, worst);
  CHECK(unexpected == 0);
  CHECK(unordered == 0);
  CHECK(stored == pattern);
  CHECK(worst <= 1e-15);
}

TEST_CASE("smoothing refuses a forced dense solve of a large problem", "[smoothing]") {
  // A ring of 5000 patches, each sending half its rays to either neighbour.
  const std::size_t n = 5000;
  Tallies t;
  t.patch_count = n;
  PatchSet patches;
  for (std::size_t i = 0; i < n; ++i) {
    std::vector<std::uint32_t> ends = {static_cast<std::uint32_t>((i + n - 1) % n),
                                       static_cast<std::uint32_t>((i + 1) % n)};
    std::sort(ends.begin(), ends.end());
    for (std::uint32_t j : ends) {
      t.hit_patch.push_back(j);
      t.hit_count.push_back(50);
    }
    t.hit_offset.push_back(t.hit_patch.size());
    t.rays.push_back(100);
    t.escaped.push_back(0);
    t.back_face.push_back(0);
    Patch p;
    p.name = "r" + std::to_string(i);
    p.area = 1;
    patches.patches.push_back(p);
  }
  SmoothingOptions options;
  options.solver = SmoothingOptions::Solver::direct;
  SmoothingSummary summary;
  CHECK_THROWS_WITH(smooth_view_factors(patches, t, options, &summary),
                    Catch::Contains("solver = direct"));
  // The same counts are already reciprocal and closed: the default path returns them.
  const ViewFactors vf = smooth_view_factors(patches, t, SmoothingOptions{}, &summary);
  CHECK(summary.converged);
  CHECK(summary.iterations == 0);
  CHECK(vf.F.coeff(0, 1) == 0.5);

  std::string error;
  options.solver = static_cast<SmoothingOptions::Solver>(7);
  CHECK_FALSE(options.IsValid(&error));
  CHECK_THAT(error, Catch::Contains("solver"));
}
