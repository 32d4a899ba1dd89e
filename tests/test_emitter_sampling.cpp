// The view-factor emitter's helpers that only change speed, never results: the search from a
// hint must find what std::upper_bound finds, and the Sobol' points made incrementally and
// put in tracing order must be the replicate's points, sorted by the place they pick along
// the triangle list.
#include <algorithm>
#include <array>
#include <catch2/catch.hpp>
#include <cstdint>
#include <random>
#include <sstream>
#include <string>
#include <utility>
#include <vector>

#include "factors/emitter_sampling.hpp"
#include "factors/hit_counter.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/sobol.hpp"

using namespace hearthray;

TEST_CASE("upper_bound_near finds what std::upper_bound finds, from any hint") {
  std::mt19937_64 rng(7);
  std::uniform_int_distribution<int> step(0, 2);  // steps of 0 give ties
  for (int trial = 0; trial < 200; ++trial) {
    const std::uint32_t n = 1 + std::uint32_t(rng() % 40);
    std::vector<double> c(n + 3);
    double v = 0;
    for (double& x : c) x = v += step(rng);
    const std::uint32_t b = std::uint32_t(rng() % 3), e = b + n;
    for (double x = -1; x <= v + 1; x += 0.5) {
      const auto expected =
          std::uint32_t(std::upper_bound(c.data() + b, c.data() + e, x) - c.data());
      for (std::uint32_t hint = b; hint < e; ++hint)
        REQUIRE(upper_bound_near(c.data(), b, e, x, hint) == expected);
    }
  }
}

namespace {

// A 1 x 1 plate of 2 n^2 triangles: one surface, hence one patch of many triangles.
Scene plate(int n) {
  std::ostringstream obj;
  obj << "o plate\n";
  for (int j = 0; j <= n; ++j)
    for (int i = 0; i <= n; ++i) obj << "v " << double(i) / n << " " << double(j) / n << " 0\n";
  for (int j = 0; j < n; ++j)
    for (int i = 0; i < n; ++i) {
      const int a = j * (n + 1) + i + 1, b = a + 1, c = a + n + 1, d = c + 1;  // 1-based
      obj << "f " << a << " " << b << " " << d << "\nf " << a << " " << d << " " << c << "\n";
    }
  std::istringstream in(obj.str());
  return load_obj(in, "plate");
}

}  // namespace

TEST_CASE("the Sobol' tracing order is a permutation walking the triangle list") {
  const Scene scene = plate(8);
  const PatchSet patches = make_surface_patches(scene);
  REQUIRE(patches.size() == 1);
  REQUIRE(patches.triangle_offset[1] == 128);
  const EmitterSampler sampler(scene, patches, Vec3{0.5, 0.5, 0}, 11, EmissionSampler::sobol);
  const std::uint64_t total = 8000, first = 1000, last = 2000;  // replicate 1 is [1000, 2000)
  EmitterSampler::Cursor cursor = sampler.start(0, total, first);
  REQUIRE(cursor.replicate_first == first);
  std::vector<EmitterSampler::SobolPoint> points, scratch;
  std::vector<std::uint32_t> buckets;
  sampler.sobol_points(cursor, first, last, &points, &scratch, &buckets);
  REQUIRE(points.size() == last - first);
  // The same points as scrambled_sobol gives one by one (made incrementally, then reordered).
  using Key = std::array<std::uint32_t, 4>;
  std::vector<Key> got, expected;
  for (const auto& p : points) got.push_back({p.x[0], p.x[1], p.x[2], p.x[3]});
  for (std::uint64_t k = first; k < last; ++k) {
    const auto u = scrambled_sobol(std::uint32_t(k - first), cursor.seeds);
    Key key;
    for (int d = 0; d < 4; ++d) key[d] = std::uint32_t(u[d] * 4294967296.0);
    expected.push_back(key);
  }
  std::sort(got.begin(), got.end());
  std::sort(expected.begin(), expected.end());
  REQUIRE(got == expected);

  // Each ray drawn in that order lands in the triangle that a full binary search over the
  // cumulative areas gives for its point's first coordinate, and the triangles move forward
  // along the list: back by at most one (two rays of a bucket, 1/1024 of the area, may swap).
  std::vector<double> cumulative;
  double area = 0;
  for (std::uint32_t k = 0; k < 128; ++k)
    cumulative.push_back(area += scene.triangle_area(patches.triangle_index[k]));
  std::uint32_t previous = 0, moves = 0;
  for (const auto& p : points) {
    Ray ray;
    float offset;
    sampler.sample_points(cursor, &p, 1, &ray, &offset);
    const double u0 = double(p.x[0]) / 4294967296.0;
    const auto expected = std::uint32_t(
        std::upper_bound(cumulative.begin(), cumulative.end(), u0 * area) - cumulative.begin());
    REQUIRE(cursor.triangle == std::min<std::uint32_t>(expected, 127));
    REQUIRE(cursor.triangle + 1 >= previous);
    moves += cursor.triangle != previous;
    previous = cursor.triangle;
  }
  CHECK(moves < 300);  // ~128 forward steps and a few swaps; a random order makes ~990
}

namespace {

// The rays of rays [first, last) of `patch` drawn the tracer's way (sobol_points, then
// sample_points on the whole run: the vectorised loops) and the reference way (sample(),
// which draws each ray by itself through EmitterSampler::emit), each as sorted byte strings.
std::pair<std::vector<std::string>, std::vector<std::string>> both_ways(
    const EmitterSampler& sampler, std::uint32_t patch, std::uint64_t total, std::uint64_t first,
    std::uint64_t last) {
  auto bytes = [](const Ray& r, float offset) {
    std::string b(reinterpret_cast<const char*>(&r), sizeof(Ray));
    return b + std::string(reinterpret_cast<const char*>(&offset), sizeof(float));
  };
  std::vector<EmitterSampler::SobolPoint> points, scratch;
  std::vector<std::uint32_t> buckets;
  EmitterSampler::Cursor cursor = sampler.start(patch, total, first);
  sampler.sobol_points(cursor, first, last, &points, &scratch, &buckets);
  std::vector<Ray> rays(points.size());
  std::vector<float> offsets(points.size());
  sampler.sample_points(cursor, points.data(), points.size(), rays.data(), offsets.data());
  std::vector<std::string> fast, reference;
  for (std::size_t i = 0; i < rays.size(); ++i) fast.push_back(bytes(rays[i], offsets[i]));
  EmitterSampler::Cursor scalar = sampler.start(patch, total, first);
  std::vector<Ray> one(last - first);
  std::vector<float> one_offset(last - first);
  sampler.sample(scalar, first, last - first, one.data(), one_offset.data());
  for (std::size_t i = 0; i < one.size(); ++i) reference.push_back(bytes(one[i], one_offset[i]));
  std::sort(fast.begin(), fast.end());
  std::sort(reference.begin(), reference.end());
  return {fast, reference};
}

}  // namespace

TEST_CASE("the tracer's vectorised ray loops give the scalar sampler's rays to the bit") {
  const Scene scene = plate(8);
  // One patch per triangle (the one-triangle loop), and one patch of 128 triangles (the walk).
  const PatchSet single = make_patches(scene, {PatchSpec{PatchSpec::Mode::per_triangle}});
  const PatchSet whole = make_surface_patches(scene);
  for (const PatchSet* patches : {&single, &whole}) {
    const EmitterSampler sampler(scene, *patches, Vec3{0.3, 0.6, 0.1}, 5, EmissionSampler::sobol);
    for (std::uint32_t p : {0u, std::uint32_t(patches->size() - 1)}) {
      // Replicates 0 and 3 of 1003 rays (125 and 126 rays: vector loops' remainders).
      for (std::uint32_t r : {0u, 3u}) {
        const std::uint64_t a = replicate_first_ray(1003, r), b = replicate_first_ray(1003, r + 1);
        const auto [fast, reference] = both_ways(sampler, p, 1003, a, b);
        REQUIRE(fast.size() == b - a);
        REQUIRE(fast == reference);
      }
    }
  }
}

TEST_CASE("sort_patches sorts receiver lists as std::sort does") {
  std::mt19937_64 rng(3);
  std::vector<std::uint32_t> scratch;
  for (std::uint64_t n_patches : {std::uint64_t{5}, std::uint64_t{2048}, std::uint64_t{98592},
                                  std::uint64_t{1} << 22, std::uint64_t{4294967295}}) {
    for (std::size_t size : {0, 1, 63, 64, 700, 5000}) {
      std::vector<std::uint32_t> v(size);
      for (auto& x : v) x = std::uint32_t(rng() % n_patches);
      std::vector<std::uint32_t> expected = v;
      std::sort(expected.begin(), expected.end());
      sort_patches(v, scratch, std::size_t(n_patches));
      REQUIRE(v == expected);
    }
  }
}

TEST_CASE("HitCounter's sorted runs count as a dense per-patch count does") {
  const Scene scene = plate(8);  // 128 triangles, one surface
  const PatchSet patches = make_patches(scene, {PatchSpec{PatchSpec::Mode::per_triangle}});
  REQUIRE(patches.size() == 128);  // front patches only: the back is one-sided
  const PatchLookup lookup(scene, patches);
  HitCounter counter(lookup);
  std::mt19937_64 rng(5);
  HitTally tally;
  std::uint64_t hits = 0;
  for (std::size_t rays : {0, 1, 63, 64, 125, 1000, 16384}) {
    for (bool drain : {false, true}) {
      std::vector<std::uint64_t> dense(patches.size(), 0);
      std::uint64_t escaped = 0, back = 0;
      for (std::size_t k = 0; k < rays; ++k) {
        RayHit hit;
        const std::uint64_t kind = rng() % 10;
        if (kind == 0) {
          ++escaped;
        } else {
          hit.triangle = std::uint32_t(rng() % (kind < 5 ? 4 : 128));  // some patches often
          hit.surface = 0;
          hit.front = kind != 1;
          const std::uint32_t q = lookup.patch_of(hit);
          if (q == PatchSet::kNoPatch)
            ++back;
          else
            ++dense[q];
          ++hits;
        }
        counter.add(hit);
      }
      std::vector<std::uint32_t> patch;
      std::vector<std::uint64_t> count;
      if (drain) {
        counter.drain(
            [&](std::uint32_t q, std::uint64_t c) {
              patch.push_back(q);
              count.push_back(c);
            },
            &tally);
      } else {
        counter.take(&tally);
        patch = tally.patch;
        count = tally.count;
      }
      std::vector<std::uint32_t> expected_patch;
      std::vector<std::uint64_t> expected_count;
      for (std::uint32_t q = 0; q < dense.size(); ++q)
        if (dense[q] > 0) expected_patch.push_back(q), expected_count.push_back(dense[q]);
      REQUIRE(patch == expected_patch);
      REQUIRE(count == expected_count);
      REQUIRE(tally.escaped == escaped);
      REQUIRE(tally.back_face == back);
    }
  }
  REQUIRE(counter.hits_on_surface()[0] == hits);
}

TEST_CASE("sort_keys sorts 64-bit keys as std::sort does") {
  std::mt19937_64 rng(4);
  std::vector<std::uint64_t> scratch;
  for (std::uint64_t bound :
       {std::uint64_t{5}, std::uint64_t{98592} << 3, std::uint64_t{1} << 35, ~std::uint64_t{0}}) {
    for (std::size_t size : {0, 1, 63, 64, 1000, 5000}) {
      std::vector<std::uint64_t> v(size);
      for (auto& x : v) x = rng() % bound;
      std::vector<std::uint64_t> expected = v;
      std::sort(expected.begin(), expected.end());
      sort_keys(v, scratch, bound);
      REQUIRE(v == expected);
    }
  }
}
