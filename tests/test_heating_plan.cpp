// Goal seek and comfort verdicts (include/hearthray/heating_plan.hpp) and the `size` command;
// the power itself is validated against bisection in
// validation/test_heating_plan_validation.cpp.
#include <catch2/catch.hpp>
#include <cmath>
#include <sstream>

#include "hearthray/heating_plan.hpp"
#include "hearthray/units.hpp"
#include "support/cli_run.hpp"
#include "support/heating_room.hpp"
#include "support/meshes.hpp"
#include "support/scene_fixtures.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

SolvedScene solved(const LoadedScene& l) {
  PipelineOptions options;
  options.threads = 1;
  SolvedScene s = model_scene(l.file, l.scene, options);
  solve_model_exchange(&s, options);
  return s;
}

const ComfortVerdict& verdict(const HeatingPlan& p, const std::string& what) {
  for (const ComfortVerdict& v : p.verdicts)
    if (v.what.find(what) != std::string::npos) return v;
  FAIL("no verdict " << what);
  return p.verdicts.front();
}

}  // namespace

TEST_CASE("goal seek meets the target, keeps the panels' proportions and gives verdicts",
          "[heating_plan]") {
  ScratchDir dir("heating_plan_unit");
  const LoadedScene l = load_scene_text(dir, box_obj(4, 3, 2.5), heating_room_scene("400 W"));
  SolvedScene s = solved(l);
  HeatingTarget target;
  target.kind = TargetKind::operative_points;  // every named point: the chair
  target.operative_K = kZeroCelsius + 21;
  PipelineOptions options;
  options.threads = 1;
  const HeatingPlan plan = plan_heating(&s, target, options);
  REQUIRE(plan.reached);
  CHECK(plan.scene_power_W == Approx(400));
  CHECK(plan.value == Approx(target.operative_K).margin(1e-6));
  REQUIRE(plan.heaters == std::vector<std::string>{"roof"});
  CHECK(plan.heater_power_W[0] == Approx(plan.power_W));
  // The first law at the plan's power: panel + gains = walls + ventilation.
  double walls = 0;
  for (const NodeResult& n : plan.result.nodes) walls += n.wall_loss_W;
  REQUIRE(plan.room_air);
  CHECK(plan.power_W + 80 == Approx(walls + plan.room_air->ventilation_W).epsilon(1e-8));
  // The floor is found by geometry and judged against 19..29 C; the air's vertical profile is
  // not modelled, and says so.
  REQUIRE(floor_surfaces(s.run.scene) == std::vector<std::size_t>{0});
  const ComfortVerdict& floor = verdict(plan, "floor surface");
  CHECK(floor.assessed);
  const double floor_C = plan.surfaces[0].temperature_K - kZeroCelsius;
  CHECK(floor.pass == (floor_C >= 19 && floor_C <= 29));
  CHECK(floor.source.find("ISO 7730") != std::string::npos);
  CHECK_FALSE(verdict(plan, "vertical air temperature").assessed);
  CHECK(verdict(plan, "target").pass);
  CHECK(verdict(plan, "PMV within").source.find("Table A.1") != std::string::npos);
  const ComfortVerdict& asymmetry = verdict(plan, "asymmetry");
  std::size_t within = 0;
  for (const PointComfort& p : plan.points) within += p.within_limits();
  CHECK(asymmetry.pass == (within == plan.points.size()));
}

TEST_CASE("goal seek says when a target is out of reach or needs no heat", "[heating_plan]") {
  ScratchDir dir("heating_plan_reach");
  const LoadedScene l = load_scene_text(dir, box_obj(4, 3, 2.5), heating_room_scene("400 W"));
  PipelineOptions options;
  options.threads = 1;
  HeatingTarget target;
  HeatingPlanOptions limits;
  limits.max_power_factor = 2;  // at most 800 W: 35 C is out of reach
  target.operative_K = kZeroCelsius + 35;
  SolvedScene s = solved(l);
  HeatingPlan plan = plan_heating(&s, target, options, limits);
  CHECK_FALSE(plan.reached);
  CHECK(plan.message.find("not reached at 800 W") != std::string::npos);
  target.operative_K = kZeroCelsius - 10;  // colder than outside: no heat needed
  plan = plan_heating(&s, target, options);
  CHECK(plan.reached);
  CHECK(plan.power_W == 0);
  CHECK(plan.message.find("heaters off") != std::string::npos);
  target.kind = TargetKind::operative_points;
  target.points = {"sofa"};
  CHECK_THROWS_WITH(plan_heating(&s, target, options), Catch::Contains("sofa"));
}

TEST_CASE("size prints the power per layout, ranks them and writes the report",
          "[heating_plan][cli]") {
  ScratchDir dir("size_cli");
  write_text(dir / "mesh.obj", box_obj(4, 3, 2.5));
  write_text(dir / "a.toml", "[mesh]\nfile = \"mesh.obj\"\n" + heating_room_scene("400 W"));
  write_text(dir / "b.toml", "[mesh]\nfile = \"mesh.obj\"\n" + heating_room_scene("300 W", false));
  const std::string scenes = "'" + (dir / "a.toml").string() + "' '" + (dir / "b.toml").string();
  const CliResult r = run_cli("size " + scenes + "' --operative 20 --at chair --threads 1 -q -o '" +
                                  (dir / "out").string() + "'",
                              dir);
  INFO(r.out << r.err);
  REQUIRE(r.status == 0);
  CHECK_THAT(r.out, Catch::Contains("operative temperature 20.0 C at chair"));
  CHECK_THAT(r.out, Catch::Contains("ranked by the power they need"));
  CHECK_THAT(r.out, Catch::Contains("floor surface temperature"));
  CHECK_THAT(r.out, Catch::Contains("electrical"));
  for (const char* f : {"report.html", "sizing.csv", "a_map_operative.png", "b_map_asymmetry.png",
                        "b_map_asymmetry.svg"})
    CHECK(std::filesystem::exists(dir / "out" / f));
  const std::string html = slurp(dir / "out" / "report.html");
  CHECK_THAT(html, Catch::Contains("data:image/png;base64,"));
  CHECK_THAT(html, Catch::Contains("burn"));
  // The title counts the layouts, the line below names them; the report's temperatures are in
  // degrees Celsius kept with their numbers; the first table ranks the layouts by power.
  CHECK_THAT(html, Catch::Contains("<h1>Radiant heating plan: 2 layouts compared</h1>"));
  CHECK_THAT(html, Catch::Contains("Layouts a and b. Target: operative temperature "
                                   "20.0\u00a0\u00b0C at chair."));
  CHECK_THAT(html, Catch::Contains("rank by power"));
  // Not quiet: each layout's notes say which layout they are about.
  const CliResult loud = run_cli("size " + scenes + "' --operative 20 --threads 1", dir);
  CHECK(loud.status == 0);
  CHECK_THAT(loud.err, Catch::Contains("note: a: [defaults] emissivity = 0.9: taken by"));
  CHECK_THAT(loud.err, Catch::Contains("note: b: [defaults] emissivity = 0.9: taken by"));
  // One target, given once.
  CHECK(run_cli("size " + scenes + "' -q", dir).status == 2);
  CHECK(run_cli("size " + scenes + "' --operative 20 --pmv -0.5,0.5 -q", dir).status == 2);
  CHECK(run_cli("size " + scenes + "' --pmv 0.5,-0.5 -q", dir).status == 2);
  CHECK(run_cli("size " + scenes + "' --operative 20 --split evenly -q", dir).status == 2);
}

TEST_CASE("size exits 5 when a layout's ray target is missed", "[heating_plan][cli]") {
  ScratchDir dir("size_target");
  write_text(dir / "mesh.obj", box_obj(4, 3, 2.5));
  // The heating room with a ray target (first rounds of 1024 rays): 1e-5 is out of reach within
  // 4096 rays per patch (standard errors near sqrt(0.2 x 0.8 / 4096) = 0.006), 0.05 is met
  // by the first round.
  auto scene = [&](const char* name, const char* target) {
    std::string text = heating_room_scene("400 W");
    const std::string rays = "per_patch = 3000\n";
    text.replace(
        text.find(rays), rays.size(),
        std::string("per_patch = 1024\ntarget_error = ") + target + "\nmax_per_patch = 4096\n");
    write_text(dir / name, "[mesh]\nfile = \"mesh.obj\"\n" + text);
    return "'" + (dir / name).string() + "'";
  };
  const std::string missed = scene("missed.toml", "1e-5"), met = scene("met.toml", "0.05");
  CliResult r = run_cli("size " + met + " " + missed + " --operative 20 --threads 1 -q", dir);
  INFO(r.out << r.err);
  CHECK(r.status == 5);
  CHECK_THAT(r.err, Catch::Contains("missed.toml: ray target NOT reached"));
  CHECK_THAT(r.err, !Catch::Contains("met.toml:"));
  CHECK(run_cli("size " + met + " --operative 20 --threads 1 -q", dir).status == 0);
}

TEST_CASE("size --split: two panels shared for the least power, or kept in proportion",
          "[heating_plan][cli]") {
  // The heating room with a second panel on the north wall (validation/
  // test_heating_plan_validation.cpp checks the split against a scan of the splits).
  ScratchDir dir("size_split");
  write_text(dir / "mesh.obj", box_obj(4, 3, 2.5));
  write_text(dir / "two.toml", "[mesh]\nfile = \"mesh.obj\"\n" + heating_room_scene("400 W") +
                                   "[surface.north]\npower = \"400 W\"\nemissivity = 0.95\n");
  const std::string base =
      "size '" + (dir / "two.toml").string() + "' --operative 21 --at chair --threads 1 -q -o '";
  const CliResult least = run_cli(base + (dir / "least").string() + "'", dir);
  const CliResult kept = run_cli(base + (dir / "kept").string() + "' --split proportional", dir);
  INFO(least.out << kept.out);
  REQUIRE(least.status == 0);
  REQUIRE(kept.status == 0);
  CHECK_THAT(least.out, Catch::Contains("split: least total power"));
  CHECK_THAT(kept.out, !Catch::Contains("split:"));
  // sizing.csv: power_W is the third column, split and proportional_power_W the 8th and 9th.
  auto row = [&](const char* folder) {
    std::istringstream csv(slurp(dir / folder / "sizing.csv"));
    std::string header, line, cell;
    std::getline(csv, header);
    std::getline(csv, line);
    std::vector<std::string> cells;
    std::istringstream in(line);
    while (std::getline(in, cell, ',')) cells.push_back(cell);
    REQUIRE(cells.size() == 10);
    return cells;
  };
  const auto l = row("least"), k = row("kept");
  CHECK(l[7] == "least");
  CHECK(k[7] == "proportional");
  CHECK(std::stod(l[8]) == Approx(std::stod(k[2])).epsilon(1e-9));  // same proportional answer
  CHECK(std::stod(l[2]) <= std::stod(k[2]) * (1 + 1e-9));           // never more power
}
