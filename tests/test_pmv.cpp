// PMV's range checks (include/hearthray/pmv.hpp); its values are validated against ISO 7730
// Annex D in validation/test_pmv_validation.cpp.
#include <catch2/catch.hpp>

#include "hearthray/pmv.hpp"

using namespace hearthray;

TEST_CASE("PMV flags conditions outside the ranges of ISO 7730 sec. 4.1", "[pmv]") {
  PmvInput in;
  in.air_C = 8;  // below 10 C
  in.mean_radiant_C = 20;
  PmvResult r = predicted_mean_vote(in);
  CHECK_FALSE(r.in_range());
  CHECK(r.out_of_range.front().find("air temperature") != std::string::npos);
  in.air_C = 20, in.mean_radiant_C = 45;  // above 40 C
  r = predicted_mean_vote(in);
  CHECK(r.out_of_range.front().find("mean radiant") != std::string::npos);
  // Inputs a user gives are refused outside the ranges.
  CHECK(pmv_input_problem(1.2, 1.0, 0.5).empty());
  CHECK(pmv_input_problem(0.7, 1.0, 0.5).find("metabolic rate") != std::string::npos);
  CHECK(pmv_input_problem(4.1, 1.0, 0.5).find("metabolic rate") != std::string::npos);
  CHECK(pmv_input_problem(1.2, 2.1, 0.5).find("clothing") != std::string::npos);
  CHECK(pmv_input_problem(1.2, 1.0, 1.1).find("humidity") != std::string::npos);
}
