// A ray budget set by the error wanted (RayTarget, pipeline.hpp; `--target-error`): rounds
// until the largest standard error is at most the target, caps on rays and time, the same
// rounds for any thread count, the cache serving a repeated run, and bad values refused.
// References: the cube factors of Howell's catalogue, C-11 (opposite faces) and C-14
// (adjacent faces), tests/support/closed_forms.hpp.
#include <catch2/catch.hpp>
#include <cmath>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "hearthray/error.hpp"
#include "hearthray/pipeline.hpp"
#include "support/cli_run.hpp"
#include "support/closed_forms.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

FactorRun cube_run(double target, std::uint64_t seed, int threads,
                   std::optional<std::uint64_t> cap = {}, std::optional<double> time_limit = {},
                   bool smooth = true) {
  PipelineOptions options;
  options.smooth = smooth;
  options.target_error = target;
  options.seed = seed;
  options.threads = threads;
  options.max_rays_per_patch = cap;
  options.time_limit_s = time_limit;
  return run_view_factors(load_obj_text(unit_cube_obj(1), "cube"), options);
}

double cube_exact(std::size_t i, std::size_t j) {
  // unit_cube_obj: faces in opposite pairs (0 1), (2 3), (4 5).
  return (i ^ 1) == j ? parallel_rectangles_aligned(1, 1, 1)
                      : perpendicular_rectangles_common_edge(1, 1, 1);
}

}  // namespace

TEST_CASE("a target error is reached and the error reported matches the one observed",
          "[ray_target]") {
  // Over 8 seeds: each run stops at or below the target, on a power of two of rays per patch,
  // and its largest reported standard error is the one it states; every factor is within 4
  // targets of C-11 / C-14. Then the observed RMS error of the factors over the seeds and
  // entries against the RMS reported standard error. Raw factors: within [0.75, 1.25] (8 seeds
  // of 30 entries, rows of 5 correlated entries: about 50 independent values, which give the
  // observed RMS to about 10 %, so 2.5 of its standard errors). Smoothed factors: the reported
  // errors are the raw ones (they do not count the smoothing's gain), so the observed error may
  // be smaller, but not larger: within [0.4, 1.25] (measured: raw 1.09, smoothed 0.63).
  const double target = 0.002;
  for (bool smooth : {false, true}) {
    double observed = 0, reported = 0;
    for (std::uint64_t seed = 1; seed <= 8; ++seed) {
      const FactorRun run = cube_run(target, seed, 2, {}, {}, smooth);
      const RayTarget& t = run.target;
      REQUIRE(t.used);
      CHECK(t.reached());
      CHECK(t.achieved <= target);
      CHECK(t.achieved == largest_standard_error(run.factors));
      CHECK(t.round_rays.back() == run.rays_per_patch);
      CHECK(t.round_errors.size() == t.round_rays.size());
      for (std::uint64_t n : t.round_rays) CHECK((n & (n - 1)) == 0);
      for (std::size_t k = 0; k + 1 < t.round_errors.size(); ++k) CHECK(t.round_errors[k] > target);
      for (std::size_t i = 0; i < 6; ++i)
        for (std::size_t j = 0; j < 6; ++j) {
          if (i == j) continue;
          const double f = run.factors.F.coeff(Eigen::Index(i), Eigen::Index(j));
          const double se = run.factors.standard_error(i, f);
          CHECK(std::fabs(f - cube_exact(i, j)) <= 4 * target);
          observed += (f - cube_exact(i, j)) * (f - cube_exact(i, j));
          reported += se * se;
        }
    }
    const double ratio = std::sqrt(observed / reported);
    INFO((smooth ? "smoothed" : "raw") << ": observed / reported RMS error " << ratio);
    CHECK(ratio > (smooth ? 0.4 : 0.75));
    CHECK(ratio < 1.25);
  }
}

TEST_CASE("target rounds are bitwise the same for 1 and 2 threads", "[ray_target]") {
  const FactorRun one = cube_run(0.003, 5, 1), two = cube_run(0.003, 5, 2);
  CHECK(one.target.round_rays == two.target.round_rays);
  CHECK(one.target.round_errors == two.target.round_errors);
  REQUIRE(one.factors.size() == two.factors.size());
  for (std::size_t i = 0; i < one.factors.size(); ++i)
    for (std::size_t j = 0; j < one.factors.size(); ++j)
      CHECK(one.factors.F.coeff(Eigen::Index(i), Eigen::Index(j)) ==
            two.factors.F.coeff(Eigen::Index(i), Eigen::Index(j)));
}

TEST_CASE("the ray cap and the time limit stop the rounds and say so", "[ray_target]") {
  // 1e-5 needs about 1e9 rays per patch; a cap of 32768 stops it there.
  const FactorRun capped = cube_run(1e-5, 1, 2, std::uint64_t{32768});
  CHECK_FALSE(capped.target.reached());
  CHECK(capped.target.stop == TargetStop::ray_cap);
  CHECK(capped.target.round_rays.back() == 32768);
  for (std::uint64_t n : capped.target.round_rays) CHECK(n <= 32768);
  CHECK(capped.target.achieved > 1e-5);
  CHECK(capped.rays_per_patch == 32768);
  // A limit of a nanosecond: the first round runs, the next would pass the limit.
  const FactorRun timed = cube_run(1e-5, 1, 2, {}, 1e-9);
  CHECK(timed.target.stop == TargetStop::time_limit);
  CHECK(timed.target.round_rays.size() == 1);
  // The default cap is there too, and a cap below the first round is refused.
  CHECK(cube_run(0.1, 1, 2).target.max_rays_per_patch == kDefaultTargetMaxRaysPerPatch);
  CHECK_THROWS_AS(cube_run(0.001, 1, 2, std::uint64_t{1000}), InputError);
}

TEST_CASE("factors --target-error: output, report, cache and exit status", "[ray_target]") {
  const ScratchDir dir("cli-target");
  write_text(dir / "cube.obj", unit_cube_obj(1));
  const std::string base =
      "factors " + (dir / "cube.obj").string() + " --cache " + (dir / "cache").string() + " ";
  auto r = run_cli(base + "--target-error 0.003 -o " + (dir / "F.json").string(), dir);
  REQUIRE(r.status == 0);
  CHECK(r.out.find("ray target: reached") != std::string::npos);
  const auto j = nlohmann::json::parse(slurp(dir / "F.json"));
  const auto& t = j["info"]["target"];
  CHECK(t["reached"] == true);
  CHECK(t["error_wanted"] == 0.003);
  CHECK(t["error_achieved"].get<double>() <= 0.003);
  CHECK(t["round_rays_per_patch"].back() == j["info"]["rays_per_patch"]);
  // The same target again: every round from the cache, the same factors and rounds (the
  // file differs only in the tracing time and rate).
  r = run_cli(base + "--target-error 0.003 -o " + (dir / "F2.json").string(), dir);
  REQUIRE(r.status == 0);
  CHECK(r.out.find("view factors: from cache") != std::string::npos);
  const auto again = nlohmann::json::parse(slurp(dir / "F2.json"));
  CHECK(again["F"] == j["F"]);
  CHECK(again["standard_error"] == j["standard_error"]);
  CHECK(again["info"]["target"] == t);
  // Not reached: exit 5, a warning naming the cap, the outputs still written.
  r = run_cli(base + "--target-error 1e-5 --max-rays 16384 -o " + (dir / "G.csv").string(), dir);
  CHECK(r.status == 5);
  CHECK(r.err.find("ray target NOT reached") != std::string::npos);
  CHECK(r.err.find("ray cap of 16384") != std::string::npos);
  CHECK(slurp(dir / "G.csv").rfind("surface,", 0) == 0);
}

TEST_CASE("bad target values are refused with exit 2", "[ray_target]") {
  const ScratchDir dir("cli-target-bad");
  write_text(dir / "cube.obj", unit_cube_obj(1));
  const std::string base = "factors " + (dir / "cube.obj").string() + " --no-cache ";
  struct Case {
    std::string args, expect;
  };
  const std::vector<Case> cases = {
      {"--target-error 0", "out of range"},
      {"--target-error 0.5", "out of range"},
      {"--target-error -0.01", "out of range"},
      {"--target-error abc", "not a plain number"},
      {"--target-error 0.5%", "only a solve"},
      {"--max-rays 100000", "give the target too"},
      {"--target-error 0.01 --time-limit 10", "has no unit"},
      {"--target-error 0.01 --time-limit \"3 kW\"", "not a unit of time"},
      {"--target-error 0.01 --max-rays 100", "below the first round"},
  };
  for (const Case& c : cases) {
    INFO(c.args);
    const auto r = run_cli(base + c.args, dir);
    CHECK(r.status == 2);
    CHECK(r.err.find("error:") != std::string::npos);
    CHECK(r.err.find(c.expect) != std::string::npos);
  }
}
