// A traced view-factor case for the tests: the scene, its surface patches and the ray tallies,
// with the raw and smoothed factors. Shared by tests/test_view_factor_engine.cpp and the
// validation cases.
#pragma once

#include <cstdint>
#include <string>

#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/smoothing.hpp"
#include "hearthray/view_factors.hpp"

namespace hearthray::testing {

struct TracedCase {
  Scene scene;
  PatchSet patches;
  Tallies tallies;
  ViewFactors raw;
  ViewFactors smoothed;
  SmoothingSummary smoothing;
};

// Surface patches of `scene`, traced with `rays` rays per patch, the given seed and thread
// count (0 = all cores), then raw and smoothed factors.
TracedCase trace_case(Scene scene, std::uint64_t rays, std::uint64_t seed = 1, int threads = 0);

// Index of the patch named `name`; throws std::out_of_range naming it when absent.
std::size_t patch_index(const ViewFactors& vf, const std::string& name);
// F(from, to) by patch names.
double factor(const ViewFactors& vf, const std::string& from, const std::string& to);
// Sum of row i of F (patches only, without surroundings and back faces).
double row_sum(const ViewFactors& vf, std::size_t i);
// Raw hit count of row `from` towards patch `to` (0 when the sparse row has no entry).
std::uint64_t hit_count(const Tallies& tallies, std::size_t from, std::size_t to);

}  // namespace hearthray::testing
