// The sobol sampler of the view factors (randomised quasi-Monte Carlo): bitwise the same for
// any thread count and any split into shards, unbiased across seeds, and standard errors from
// the replicates that match the spread observed over many seeds.
// References: the cube factors of Howell's catalog (C-11, C-14) and the parallel-rectangle
// exchange area of Siegel & Howell, and the baffled plates' factor built from B-3
// (tests/support/closed_forms.hpp).
#include <catch2/catch.hpp>
#include <cmath>
#include <vector>

#include "hearthray/smoothing.hpp"
#include "hearthray/tracer.hpp"
#include "hearthray/view_factors.hpp"
#include "support/closed_forms.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

Tallies trace_sobol(const Scene& scene, const PatchSet& patches, std::uint64_t rays,
                    std::uint64_t seed, int threads = 1, std::uint32_t begin = 0,
                    std::uint32_t end = 0) {
  const Tracer tracer(scene);
  ViewFactorOptions options;
  options.sampler = EmissionSampler::sobol;
  options.rays_per_patch = rays;
  options.seed = seed;
  options.threads = threads;
  options.emitter_begin = begin;
  options.emitter_end = end;
  return trace_tallies(scene, patches, tracer, options);
}

bool same(const Tallies& a, const Tallies& b) {
  return a.rays == b.rays && a.escaped == b.escaped && a.back_face == b.back_face &&
         a.hit_offset == b.hit_offset && a.hit_patch == b.hit_patch && a.hit_count == b.hit_count &&
         a.hit_square == b.hit_square && a.escaped_square == b.escaped_square &&
         a.back_face_square == b.back_face_square && a.hits_on_surface == b.hits_on_surface;
}

// The baffled plates of tests/support/meshes.hpp with the baffle smaller than the plates
// (1 x 1 plates 1 apart, a 0.6 x 0.6 two-sided baffle half-way): "upper" is partly hidden
// from "lower".
Scene baffled() {
  Scene s = load_obj_text(baffled_plates_obj(1, 1, 0.6), "baffle");
  s.surfaces[static_cast<std::size_t>(s.find_surface("baffle"))].two_sided = true;
  return s;
}

// Over `seeds` runs: per entry (i, j), the mean factor, the observed variance across seeds
// and the mean reported variance (standard_error squared).
struct SeedStudy {
  std::vector<double> mean, observed, reported;
};
SeedStudy study(const Scene& scene, const PatchSet& patches, std::uint64_t rays, int seeds) {
  const std::size_t n = patches.size();
  SeedStudy s{std::vector<double>(n * n, 0.0), std::vector<double>(n * n, 0.0),
              std::vector<double>(n * n, 0.0)};
  std::vector<double> square(n * n, 0.0);
  for (int k = 0; k < seeds; ++k) {
    const ViewFactors vf =
        raw_view_factors(patches, trace_sobol(scene, patches, rays, 1000 + k, 2));
    for (std::size_t i = 0; i < n; ++i)
      for (std::size_t j = 0; j < n; ++j) {
        const double f = vf.F.coeff(Eigen::Index(i), Eigen::Index(j));
        s.mean[i * n + j] += f / seeds;
        square[i * n + j] += f * f / seeds;
        s.reported[i * n + j] += vf.standard_error(i, f) * vf.standard_error(i, f) / seeds;
      }
  }
  for (std::size_t e = 0; e < n * n; ++e)
    s.observed[e] = (square[e] - s.mean[e] * s.mean[e]) * seeds / (seeds - 1.0);
  return s;
}

}  // namespace

TEST_CASE("sobol sampler: bitwise the same for any thread count and any sharding", "[qmc]") {
  const Scene scene = load_obj_text(box_obj(1, 2, 3, 2), "box");
  const PatchSet patches = make_surface_patches(scene);
  // 40001 rays: replicates of 5000 and 5001 rays, chunks cut inside replicates.
  const Tallies one = trace_sobol(scene, patches, 40001, 7, 1);
  const Tallies two = trace_sobol(scene, patches, 40001, 7, 2);
  CHECK(same(one, two));
  CHECK(one.hit_square.size() == one.hit_count.size());
  CHECK(same(merge_shards({trace_sobol(scene, patches, 40001, 7, 2, 0, 4),
                           trace_sobol(scene, patches, 40001, 7, 1, 4, 6)}),
             one));
  // A different seed gives different rays.
  CHECK_FALSE(same(trace_sobol(scene, patches, 40001, 8, 2), one));
}

TEST_CASE("sobol sampler: unbiased across seeds on the cube and an obstructed scene", "[qmc]") {
  // Mean over 32 seeds within 4 standard errors of the mean (from the observed spread) of
  // Howell C-11 / C-14 for the cube, and of Siegel & Howell's parallel-rectangle exchange
  // area for lower -> baffle (nothing lies between them).
  const int seeds = 32;
  const Scene cube = load_obj_text(unit_cube_obj(1), "cube");
  const PatchSet cube_patches = make_surface_patches(cube);
  const SeedStudy c = study(cube, cube_patches, 4096, seeds);
  const std::size_t n = cube_patches.size();
  for (std::size_t i = 0; i < n; ++i)
    for (std::size_t j = 0; j < n; ++j) {
      if (i == j) continue;
      const double expected = (i ^ 1) == j ? parallel_rectangles_aligned(1, 1, 1)
                                           : perpendicular_rectangles_common_edge(1, 1, 1);
      const double sigma = std::sqrt(c.observed[i * n + j] / seeds);
      INFO(i << " -> " << j << ": " << c.mean[i * n + j] << " vs " << expected);
      CHECK(std::fabs(c.mean[i * n + j] - expected) <= 4 * sigma + 1e-12);
      CHECK(sigma > 0);
    }
  const Scene open = baffled();
  const PatchSet patches = make_surface_patches(open);
  const SeedStudy b = study(open, patches, 4096, seeds);
  const std::size_t m = patches.size();
  for (std::size_t i = 0; i < m; ++i)
    for (std::size_t j = 0; j < m; ++j) {
      if (patches.patches[i].name != "lower" || patches.patches[j].name.rfind("baffle", 0) != 0 ||
          patches.patches[j].side != Side::back)
        continue;
      const double expected =
          parallel_rectangles_exchange_area({-0.5, 0.5, -0.5, 0.5}, {-0.3, 0.3, -0.3, 0.3}, 0.5);
      INFO(patches.patches[j].name << ": " << b.mean[i * m + j] << " vs " << expected);
      CHECK(std::fabs(b.mean[i * m + j] - expected) <=
            4 * std::sqrt(b.observed[i * m + j] / seeds));
    }
  // lower -> upper, partly hidden by the baffle: the semi-analytic factor of closed_forms.hpp.
  for (std::size_t i = 0; i < m; ++i)
    for (std::size_t j = 0; j < m; ++j) {
      if (patches.patches[i].name != "lower" || patches.patches[j].name != "upper") continue;
      const double expected = baffled_plates_factor(1, 1, 0.6);
      INFO("lower -> upper: " << b.mean[i * m + j] << " vs " << expected);
      CHECK(std::fabs(b.mean[i * m + j] - expected) <=
            4 * std::sqrt(b.observed[i * m + j] / seeds));
    }
}

TEST_CASE("sobol sampler: reported standard errors match the spread over seeds", "[qmc]") {
  // Over 96 seeds, the root-mean-square reported standard error against the standard
  // deviation observed across seeds, pooled over the entries of each scene: within 20 %.
  // (The observed variance from 96 seeds has a relative standard error of sqrt(2/95) = 15 %
  // per entry; pooling over 20-30 entries brings it to a few per cent.)
  for (int which = 0; which < 2; ++which) {
    const Scene scene = which == 0 ? load_obj_text(unit_cube_obj(1), "cube") : baffled();
    const PatchSet patches = make_surface_patches(scene);
    const SeedStudy s = study(scene, patches, 4096, 96);
    double reported = 0, observed = 0;
    for (std::size_t e = 0; e < s.mean.size(); ++e) {
      reported += s.reported[e];
      observed += s.observed[e];
    }
    const double ratio = std::sqrt(reported / observed);
    INFO((which == 0 ? "cube" : "baffled plates") << ": reported / observed " << ratio);
    CHECK(ratio > 0.8);
    CHECK(ratio < 1.2);
    // The replicates see the gain of the sequence: errors below the binomial formula's.
    const ViewFactors vf = raw_view_factors(patches, trace_sobol(scene, patches, 4096, 5, 2));
    for (double r : vf.error_ratio) CHECK(r < 1);
  }
}

TEST_CASE("replicate error ratio: the standard error of a mean of replicates over the binomial",
          "[qmc]") {
  // One row of 800 rays in 8 replicates of 100. The reference is the textbook standard error
  // of the mean of R independent replicates, s^2 / R with s^2 = sum_r (f_r - f)^2 / (R - 1)
  // (e.g. Owen, "Monte Carlo theory, methods and examples", randomised quasi-Monte Carlo;
  // recalled), against the binomial variance f (1 - f) / N, summed over the row's entries.
  // Counts below and above 32 and an entry with no spread at all (the back faces) are there.
  const std::vector<std::vector<double>> counts = {
      {3, 5, 4, 6, 2, 5, 4, 3},          // 32 rays in all
      {0, 1, 0, 0, 1, 0, 0, 0},          // 2
      {40, 37, 45, 41, 38, 44, 39, 42},  // 326
  };
  const std::vector<double> escaped = {57, 57, 51, 53, 59, 51, 57, 55};  // the rest: 440
  const double R = kSobolReplicates, N = 800, M = N / R;
  Tallies t;
  t.patch_count = 4;
  t.rays = {800};
  t.back_face = {0};
  t.back_face_square = {0};
  t.hit_offset = {0};
  double spread = 0, binomial = 0;
  auto add = [&](const std::vector<double>& c, std::uint64_t* total, double* square) {
    double sum = 0, sum_squares = 0;
    for (double x : c) {
      sum += x;
      sum_squares += (x / M) * (x / M);
    }
    const double f = sum / N;
    double deviation = 0;
    for (double x : c) deviation += (x / M - f) * (x / M - f);
    spread += deviation / (R - 1) / R;
    binomial += f * (1 - f) / N;
    *total = static_cast<std::uint64_t>(sum);
    *square = sum_squares;
  };
  for (std::size_t e = 0; e < counts.size(); ++e) {
    std::uint64_t total = 0;
    double square = 0;
    add(counts[e], &total, &square);
    t.hit_patch.push_back(static_cast<std::uint32_t>(e + 1));
    t.hit_count.push_back(total);
    t.hit_square.push_back(square);
  }
  t.hit_offset.push_back(t.hit_patch.size());
  std::uint64_t escaped_total = 0;
  double escaped_square = 0;
  add(escaped, &escaped_total, &escaped_square);
  t.escaped = {escaped_total};
  t.escaped_square = {escaped_square};
  REQUIRE(escaped_total + 32 + 2 + 326 == 800);
  const std::vector<double> ratio = replicate_error_ratio(t);
  REQUIRE(ratio.size() == 1);
  CHECK(ratio[0] == Approx(std::sqrt(spread / binomial)).epsilon(1e-12));
}
