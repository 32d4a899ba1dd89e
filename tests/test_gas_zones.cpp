// Gas zones: the grid walk, zone volumes, exchange areas' closure and reciprocity, smoothing,
// and independence from the thread count.
#include <catch2/catch.hpp>
#include <cmath>

#include "hearthray/error.hpp"
#include "hearthray/gas_zones.hpp"
#include "support/closed_forms.hpp"
#include "support/gas_fixtures.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

TEST_CASE("the grid walk covers a ray's path cell by cell", "[gas]") {
  Box3 box;
  box.grow({0, 0, 0});
  box.grow({4, 1, 1});
  const ZoneGrid grid(box, {4, 1, 1});
  std::vector<ZoneGrid::Stretch> st;
  grid.walk({0.5, 0.5, 0.5}, {1, 0, 0}, 3.0, &st);
  REQUIRE(st.size() == 4);
  for (int i = 0; i < 4; ++i) CHECK(st[i].cell == std::uint32_t(i));
  CHECK(st[0].end == Approx(0.5));
  CHECK(st[2].end == Approx(2.5));
  CHECK(st[3].end == 3.0);

  // Random rays through a 3 x 4 x 5 grid: every stretch's midpoint lies in its cell, the
  // stretches are in order and end at t_max (a property of a correct traversal).
  Box3 b2;
  b2.grow({-1, 0, 2});
  b2.grow({2, 2, 7});
  const ZoneGrid g2(b2, {3, 4, 5});
  std::uint64_t state = 12345;
  auto uni = [&] {
    state = state * 6364136223846793005ull + 1442695040888963407ull;
    return double(state >> 11) / 9007199254740992.0;
  };
  for (int r = 0; r < 2000; ++r) {
    const Vec3 o{-1 + 3 * uni(), 2 * uni(), 2 + 5 * uni()};
    const Vec3 d = normalized(Vec3{uni() - 0.5, uni() - 0.5, uni() - 0.5});
    // Distance to the box's boundary along d.
    double t_max = 1e30;
    for (int a = 0; a < 3; ++a) {
      if (d[a] > 0) t_max = std::min(t_max, (b2.hi[a] - o[a]) / d[a]);
      if (d[a] < 0) t_max = std::min(t_max, (b2.lo[a] - o[a]) / d[a]);
    }
    g2.walk(o, d, t_max, &st);
    double t0 = 0;
    for (const auto& s : st) {
      REQUIRE(s.end >= t0);
      const Vec3 m = o + d * (0.5 * (t0 + s.end));
      const Box3 c = g2.cell_box(s.cell);
      for (int a = 0; a < 3; ++a) {
        CHECK(m[a] >= c.lo[a] - 1e-9);
        CHECK(m[a] <= c.hi[a] + 1e-9);
      }
      t0 = s.end;
    }
    CHECK(t0 == t_max);
  }
}

TEST_CASE("gas volume by the divergence theorem", "[gas]") {
  // A 3 x 2 x 1 box holding a 0.5 m cube: 6 - 0.125 m^3 of gas (exact).
  const Scene scene = load_obj_text(box_with_load_obj(3, 2, 1, 1, 0.5, 0.25, 0.5), "box");
  CHECK(gas_volume_by_divergence(scene) == Approx(6 - 0.125).epsilon(1e-12));
}

namespace {

struct Traced {
  Scene scene;
  PatchSet patches;
  GasExchange x;
};

Traced trace(const Scene& scene, std::array<int, 3> cells, std::vector<double> k,
             std::uint64_t rays, int threads = 0) {
  Traced t{scene, make_surface_patches(scene), {}};
  const Tracer tracer(t.scene);
  GasTraceOptions options;
  options.rays_per_patch = rays;
  options.rays_per_cell = rays;
  options.threads = threads;
  t.x = trace_gas_exchange(t.scene, t.patches, tracer, cells, k, options);
  return t;
}

}  // namespace

TEST_CASE("cube of gas: closure, volumes, clear-gas view factors, reciprocity", "[gas]") {
  const Scene cube = load_obj_text(unit_cube_obj(), "cube");
  const Traced t = trace(cube, {2, 2, 2}, {0.0, 1.5}, 20000);
  const GasExchange& x = t.x;
  REQUIRE(x.zone_count() == 8);
  REQUIRE(x.patch_count == 6);
  for (std::size_t z = 0; z < 8; ++z) {
    // Every point of a cell of the cube lies in the gas: V = 1/8 exactly, no error.
    CHECK(x.volume[z] == Approx(0.125).epsilon(1e-9));
    CHECK(x.volume_error[z] == 0.0);
  }
  for (std::size_t g = 0; g < 2; ++g)
    for (std::size_t i = 0; i < x.rows(); ++i) {
      // Raw rows close by construction: per ray the expected-value scores telescope to one.
      INFO("gas " << g << " row " << i);
      CHECK(x.lost[g](i) == 0.0);
      if (x.row_target(g, i) > 0)
        CHECK(x.S[g].row(i).sum() == Approx(x.row_target(g, i)).epsilon(1e-12));
      else
        CHECK(x.S[g].row(i).sum() == 0.0);
    }
  // Clear gas: the surface block is A F. Howell C-11 and C-14 for a unit cube.
  const double opposite = parallel_rectangles_aligned(1, 1, 1);
  const double adjacent = perpendicular_rectangles_common_edge(1, 1, 1);
  const int floor = cube.find_surface("floor"), roof = cube.find_surface("roof"),
            west = cube.find_surface("west");
  const double n = 20000;
  CHECK(std::fabs(x.S[0](floor, roof) - opposite) < 4 * std::sqrt(opposite * (1 - opposite) / n));
  CHECK(std::fabs(x.S[0](floor, west) - adjacent) < 4 * std::sqrt(adjacent * (1 - adjacent) / n));
  // Reciprocity between the two estimates, before smoothing: s_p g_z from surface rays and
  // g_z s_p from zone rays agree within 4 combined standard errors; likewise zone pairs.
  int checked = 0;
  for (std::size_t i = 0; i < x.rows(); ++i)
    for (std::size_t j = i + 1; j < x.rows(); ++j) {
      const double a = x.S[1](i, j), b = x.S[1](j, i);
      const double s = std::hypot(x.sigma[1](i, j), x.sigma[1](j, i));
      if (s == 0) continue;
      INFO("rows " << i << ", " << j << ": " << a << " vs " << b);
      CHECK(std::fabs(a - b) < 4 * s);
      ++checked;
    }
  CHECK(checked > 50);
}

TEST_CASE("smoothing makes gas exchange areas reciprocal and closed", "[gas]") {
  const Scene cube = load_obj_text(unit_cube_obj(), "cube");
  Traced t = trace(cube, {3, 1, 1}, {0.0, 0.4, 3.0}, 20000);
  const GasSmoothingSummary s = smooth_gas_exchange(t.x);
  CHECK(s.converged);
  CHECK(s.max_row_error < 1e-12);
  CHECK(s.max_reciprocity_error < 1e-14);
  CHECK(s.max_correction_sigma < 5);  // corrections of the order of the statistical error
  for (std::size_t g = 0; g < 3; ++g) CHECK((t.x.S[g].array() >= 0).all());
}

TEST_CASE("zones inside a solid load are dropped and volumes add up", "[gas]") {
  // 3 x 2 x 1.5 box with a 0.5 m cube of load; 6 x 4 x 3 cells of 0.5 m: the load
  // [1, 1.5] x [0.5, 1] x [0.5, 1] fills one cell; a second grid cuts through it.
  const Scene scene = load_obj_text(box_with_load_obj(3, 2, 1.5, 1, 0.5, 0.5, 0.5), "furnace");
  const Traced t = trace(scene, {6, 4, 3}, {0.5}, 4000);
  CHECK(t.x.zone_count() == 71);  // 72 cells less the one the load fills
  const Traced cut = trace(scene, {5, 3, 2}, {0.5}, 4000);
  for (const GasExchange* x : {&t.x, &cut.x}) {
    double v = 0, var = 0;
    for (std::size_t z = 0; z < x->zone_count(); ++z)
      v += x->volume[z], var += std::pow(x->volume_error[z], 2);
    // Divergence theorem: 9 - 0.125 m^3 of gas.
    CHECK(gas_volume_by_divergence(scene) == Approx(9 - 0.125).epsilon(1e-12));
    CHECK(std::fabs(v - gas_volume_by_divergence(scene)) <= 4 * std::sqrt(var) + 1e-12);
  }
}

TEST_CASE("gas exchange areas do not depend on the thread count", "[gas]") {
  const Scene cube = load_obj_text(unit_cube_obj(2), "cube");
  const Traced a = trace(cube, {2, 1, 2}, {0.3, 2.0}, 20000, 1);
  const Traced b = trace(cube, {2, 1, 2}, {0.3, 2.0}, 20000, 2);
  for (std::size_t g = 0; g < 2; ++g) {
    CHECK((a.x.S[g].array() == b.x.S[g].array()).all());
    CHECK((a.x.sigma[g].array() == b.x.sigma[g].array()).all());
  }
}

TEST_CASE("gas exchange input is checked", "[gas]") {
  const Scene cube = load_obj_text(unit_cube_obj(), "cube");
  const PatchSet patches = make_surface_patches(cube);
  const Tracer tracer(cube);
  GasTraceOptions options;
  CHECK_THROWS_AS(trace_gas_exchange(cube, patches, tracer, {1, 1, 1}, {-1.0}, options),
                  InputError);
  CHECK_THROWS_AS(trace_gas_exchange(cube, patches, tracer, {0, 1, 1}, {1.0}, options), InputError);
  // A run estimated past the memory limit is refused with the estimate, unless forced.
  options.memory_limit_bytes = 1000;
  options.rays_per_patch = options.rays_per_cell = 100;
  CHECK_THROWS_WITH(trace_gas_exchange(cube, patches, tracer, {2, 2, 2}, {1.0}, options),
                    Catch::Contains("of memory") && Catch::Contains("--force"));
  options.force = true;
  CHECK(trace_gas_exchange(cube, patches, tracer, {2, 2, 2}, {1.0}, options).zone_count() == 8);
  options.force = false;
  options.memory_limit_bytes = 0;
  // Fronts facing away from the gas: no point is found inside.
  const Scene outside = load_obj_text(box_with_load_obj(3, 2, 1.5, 1, 0.5, 0.5, 0.5), "x");
  const Scene load_only = keep_surfaces(outside, {"load"});
  const PatchSet lp = make_surface_patches(load_only);
  const Tracer lt(load_only);
  options.rays_per_cell = 100;
  options.rays_per_patch = 100;
  CHECK_THROWS_WITH(trace_gas_exchange(load_only, lp, lt, {1, 1, 1}, {1.0}, options),
                    Catch::Contains("no sampled point"));
}
