// Properties of the view-factor engine that hold for any geometry: independence of scale and
// unit, of the thread count and of sharding; exact reciprocity and closure after smoothing.
// References: the cube factors of Howell's catalog (C-11, C-14; tests/support/closed_forms.hpp)
// and the definitions in include/hearthray/view_factors.hpp and smoothing.hpp.
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <stdexcept>
#include <vector>

#include "hearthray/tracer.hpp"
#include "support/closed_forms.hpp"
#include "support/meshes.hpp"
#include "support/traced_case.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

constexpr std::uint64_t kRays = 100000;
constexpr std::uint64_t kSeed = 7;

bool same_tallies(const Tallies& a, const Tallies& b) {
  return a.patch_count == b.patch_count && a.emitter_begin == b.emitter_begin && a.rays == b.rays &&
         a.escaped == b.escaped && a.back_face == b.back_face && a.hit_offset == b.hit_offset &&
         a.hit_patch == b.hit_patch && a.hit_count == b.hit_count &&
         a.back_face_hits_on_surface == b.back_face_hits_on_surface &&
         a.hits_on_surface == b.hits_on_surface;
}

Tallies trace(const Scene& scene, const PatchSet& patches, int threads, std::uint32_t begin = 0,
              std::uint32_t end = 0) {
  const Tracer tracer(scene);
  ViewFactorOptions options;
  options.rays_per_patch = kRays;
  options.seed = kSeed;
  options.threads = threads;
  options.emitter_begin = begin;
  options.emitter_end = end;
  return trace_tallies(scene, patches, tracer, options);
}

}  // namespace

TEST_CASE("a cube gives the same factors from millimetres to kilometres", "[engine]") {
  // Self-hit avoidance must not depend on the size of the scene or on its unit. The same cube
  // at 1 mm (written in mm), 1 m (written in mm) and 1 km (written in m): every factor within
  // 4 standard errors of the others (of a difference: sqrt(2) sigma) and of Howell C-11/C-14.
  struct Variant {
    const char* label;
    double scale;
    LengthUnit unit;
  };
  const Variant variants[] = {{"1 mm cube in mm", 1, LengthUnit::mm},
                              {"1 m cube in mm", 1000, LengthUnit::mm},
                              {"1 km cube in m", 1000, LengthUnit::m}};
  std::vector<TracedCase> cases;
  for (const Variant& v : variants) {
    cases.push_back(
        trace_case(load_obj_text(unit_cube_obj(2, v.scale), v.label, v.unit), kRays, kSeed));
  }
  const double opposite = parallel_rectangles_aligned(1, 1, 1);
  const double adjacent = perpendicular_rectangles_common_edge(1, 1, 1);
  const TracedCase& ref = cases[0];
  for (std::size_t c = 0; c < cases.size(); ++c) {
    const ViewFactors& vf = cases[c].raw;
    const double side = std::sqrt(cases[c].scene.surfaces[0].area);
    INFO(variants[c].label << " (side " << side << " m)");
    for (std::size_t i = 0; i < vf.size(); ++i) {
      CHECK(cases[c].tallies.escaped[i] == 0);
      CHECK(cases[c].tallies.back_face[i] == 0);
      for (std::size_t j = 0; j < vf.size(); ++j) {
        if (i == j) continue;
        const double f = vf.F.coeff(Eigen::Index(i), Eigen::Index(j));
        const double expected = (i ^ 1) == j ? opposite : adjacent;  // faces come in pairs
        const double sigma = vf.standard_error(i, expected);
        INFO(vf.names[i] << " -> " << vf.names[j] << ": " << f << " vs " << expected);
        CHECK(std::fabs(f - expected) <= 4 * sigma);
        const double f_ref = ref.raw.F.coeff(Eigen::Index(i), Eigen::Index(j));
        CHECK(std::fabs(f - f_ref) <= 4 * std::sqrt(2.0) * sigma);
      }
    }
  }
  // Sizes really differ by 10^3 and 10^6 in metres.
  CHECK(cases[1].scene.surfaces[0].area == Approx(1.0));
  CHECK(cases[2].scene.surfaces[0].area == Approx(1e6));
}

TEST_CASE("one and two threads give bitwise identical tallies", "[engine]") {
  const Scene scene = load_obj_text(box_obj(1, 2, 3, 2), "box");
  const PatchSet patches = make_surface_patches(scene);
  const Tallies one = trace(scene, patches, 1);
  const Tallies two = trace(scene, patches, 2);
  CHECK(same_tallies(one, two));
  // Not trivially equal: the rays did land on several faces.
  CHECK(one.hit_patch.size() == 30);
}

TEST_CASE("shards of emitter ranges merge into the full run bitwise", "[engine]") {
  const Scene scene = load_obj_text(box_obj(1, 2, 3, 2), "box");
  const PatchSet patches = make_surface_patches(scene);
  REQUIRE(patches.size() == 6);
  const Tallies full = trace(scene, patches, 2);
  const Tallies first = trace(scene, patches, 2, 0, 3);
  const Tallies second = trace(scene, patches, 1, 3, 6);
  CHECK(first.rows() == 3);
  CHECK(second.emitter_begin == 3);
  CHECK(same_tallies(merge_shards({first, second}), full));
}

TEST_CASE("a wrong emitter range or shard order is a logic error, not bad input", "[engine]") {
  // Emitter ranges and shards come from the caller's code, never from a user's file: a
  // mistake there is std::invalid_argument (the tool reports an internal error, exit 3).
  const Scene scene = load_obj_text(box_obj(1, 2, 3, 2), "box");
  const PatchSet patches = make_surface_patches(scene);
  CHECK_THROWS_AS(trace(scene, patches, 1, 4, 9), std::invalid_argument);
  CHECK_THROWS_AS(trace(scene, patches, 1, 5, 3), std::invalid_argument);
  ViewFactorOptions short_rays;
  short_rays.rays_for_patch = {100, 100};
  const Tracer tracer(scene);
  CHECK_THROWS_AS(trace_tallies(scene, patches, tracer, short_rays), std::invalid_argument);
  const Tallies first = trace(scene, patches, 1, 0, 3);
  const Tallies second = trace(scene, patches, 1, 3, 6);
  CHECK_THROWS_AS(merge_shards({second, first}), std::invalid_argument);
  CHECK_THROWS_AS(merge_shards({}), std::invalid_argument);
}

TEST_CASE("smoothed factors: exact reciprocity, unit rows, no negatives", "[engine]") {
  // A closed box of unequal faces and an open scene with a two-sided baffle (surroundings and
  // structural zeros): after smoothing A_i F_ij = A_j F_ji to 1e-12 relative, every row with
  // its surroundings and back-face fractions sums to 1, and nothing is negative.
  std::vector<TracedCase> cases;
  cases.push_back(trace_case(load_obj_text(box_obj(1, 2, 3), "box"), kRays, kSeed));
  Scene open = load_obj_text(baffled_plates_obj(1, 1, 1.5), "baffle");
  open.surfaces[static_cast<std::size_t>(open.find_surface("baffle"))].two_sided = true;
  cases.push_back(trace_case(std::move(open), kRays, kSeed));
  for (const TracedCase& c : cases) {
    INFO(c.scene.source);
    REQUIRE(c.smoothing.converged);
    const ViewFactors& vf = c.smoothed;
    CHECK(vf.smoothed);
    const std::size_t n = vf.size();
    for (std::size_t i = 0; i < n; ++i) {
      double sum = vf.to_surroundings[i] + vf.to_back_faces[i];
      CHECK(vf.to_surroundings[i] >= 0);
      CHECK(vf.to_back_faces[i] >= 0);
      for (std::size_t j = 0; j < n; ++j) {
        const double fij = vf.F.coeff(Eigen::Index(i), Eigen::Index(j));
        const double fji = vf.F.coeff(Eigen::Index(j), Eigen::Index(i));
        INFO(vf.names[i] << " <-> " << vf.names[j]);
        CHECK(fij >= 0);
        const double sij = vf.areas[i] * fij, sji = vf.areas[j] * fji;
        CHECK(std::fabs(sij - sji) <= 1e-12 * std::max(sij, sji));
        // Structural zeros stay zero: no rays either way, no factor either way.
        const double raw_ij = c.raw.F.coeff(Eigen::Index(i), Eigen::Index(j));
        const double raw_ji = c.raw.F.coeff(Eigen::Index(j), Eigen::Index(i));
        if (raw_ij == 0 && raw_ji == 0) CHECK(fij == 0);
        sum += fij;
      }
      CHECK(std::fabs(sum - 1) <= 1e-12);
    }
  }
}
