// Firing curves (hearthray/firing.hpp): the radiation operator against the steady exchange
// solve, the schedule and controller, and energy conservation over a firing.
#include <catch2/catch.hpp>
#include <cmath>

#include "hearthray/firing.hpp"
#include "hearthray/pipeline.hpp"
#include "hearthray/units.hpp"
#include "support/cli_run.hpp"
#include "support/meshes.hpp"
#include "support/scene_fixtures.hpp"
#include "transient/firing_system.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

// A small kiln of our own (invented): a 0.6 m box, the four side walls heated, floor and
// roof insulated walls; a lumped load stands for the ware.
const char* kKiln = R"(
[rays]
per_patch = 20000
[defaults]
emissivity = 0.8
adiabatic = true
[surface.south]
power = "2 kW"
[surface.north]
power = "2 kW"
)";

SolvedScene kiln_model(const ScratchDir& dir) {
  const LoadedScene l = load_scene_text(dir, box_obj(0.6, 0.6, 0.6), kKiln);
  PipelineOptions options;
  return model_scene(l.file, l.scene, options);
}

WallLayer brick(double thickness) {
  WallLayer b;
  b.thickness = thickness;
  b.conductivity = 0.2;
  b.density = 600;
  b.specific_heat = 1000;
  return b;
}

FiringInput kiln_firing() {
  FiringInput in;
  in.control = "east";
  in.start_K = 293.15;
  in.schedule = {{ScheduleSegment::Kind::ramp, 150.0 / 3600, 873.15, 0},
                 {ScheduleSegment::Kind::hold, 0, 0, 1800},
                 {ScheduleSegment::Kind::cool, 0, 573.15, 0}};
  SurfaceMass wall;
  wall.kind = SurfaceMass::Kind::wall;
  wall.layers = {brick(0.05)};
  for (const char* name : {"floor", "roof", "south", "north"}) in.surfaces.push_back({name, wall});
  SurfaceMass ware;
  ware.kind = SurfaceMass::Kind::lumped;
  ware.mass = 3;
  ware.specific_heat = 900;
  in.surfaces.push_back({"west", ware});
  return in;
}

}  // namespace

TEST_CASE("the radiation operator gives the steady solve's net radiation", "[firing]") {
  // solve_exchange on the same model with every temperature given is the reference: the
  // operator is the same radiosity algebra solved once for all temperatures.
  const ScratchDir dir("firing-operator");
  SolvedScene s = kiln_model(dir);
  const transient::RadiationOperator op = transient::radiation_operator(s.model);
  const std::size_t N = s.model.nodes.size();
  // No net radiation at one temperature everywhere (closed box: no surroundings term).
  const Eigen::VectorXd one = Eigen::VectorXd::Ones(Eigen::Index(N));
  CHECK((op.K * one + op.surroundings).cwiseAbs().maxCoeff() < 1e-12 * op.K.cwiseAbs().maxCoeff());
  Eigen::VectorXd T(N), E(N);
  for (std::size_t n = 0; n < N; ++n) {
    T(Eigen::Index(n)) = 500 + 97.0 * double(n);
    E(Eigen::Index(n)) = kStefanBoltzmann * std::pow(T(Eigen::Index(n)), 4);
    s.model.nodes[n].condition = NodeCondition{ConditionKind::temperature, T(Eigen::Index(n))};
  }
  const ExchangeResult r = solve_exchange(s.model.problem(), ExchangeOptions{});
  REQUIRE(r.status == ExchangeStatus::converged);
  const Eigen::VectorXd Q = op.K * E;
  for (std::size_t n = 0; n < N; ++n)
    CHECK(Q(Eigen::Index(n)) == Approx(r.nodes[n].net_radiation_W).margin(1e-9 * E.maxCoeff()));
}

TEST_CASE("a firing follows its schedule and conserves energy", "[firing]") {
  const ScratchDir dir("firing-kiln");
  const SolvedScene s = kiln_model(dir);
  const FiringInput in = kiln_firing();
  const FiringResult r = run_firing(s.model, in);
  INFO(r.message);
  REQUIRE(r.completed);
  if (std::getenv("DBG"))
    for (std::size_t i = 0; i < r.samples.size(); i += 10) {
      const auto& x = r.samples[i];
      std::printf("%8.0f sp %7.1f ctl %7.1f P %6.0f", x.time_s, x.set_point_K, x.control_K,
                  x.power_W);
      for (double t : x.surface_K) std::printf(" %7.1f", t);
      std::printf("\n");
    }
  REQUIRE(r.segments.size() == 3);
  // Energy in = stored + lost, to 1e-6 of the energy in (backward Euler conserves exactly;
  // what is left is Newton's tolerance and round-off).
  CHECK(r.energy_in_J > 0);
  CHECK(std::fabs(r.residual_J) < 1e-6 * r.energy_in_J);
  CHECK(r.stored_walls_J > 0);
  CHECK(r.case_loss_J > 0);
  // 4 kW on a 0.6 m kiln follows 150 K/h: the ramp is followed, and the hold holds.
  CHECK(r.segments[0].followed);
  CHECK(r.segments[0].control_end_K == Approx(873.15).margin(in.lag_limit_K));
  CHECK(r.control_reached_s[0] > 0);
  // The ramp takes (600 - 20) K / 150 K/h = 3.87 h; natural cooling ends the firing.
  CHECK(r.segments[0].end_s == Approx(580.0 / 150 * 3600).epsilon(1e-9));
  CHECK(r.segments[1].end_s - r.segments[1].start_s == Approx(1800).epsilon(1e-9));
  CHECK(r.samples.back().control_K <= 573.15);
  for (const FiringSample& x : r.samples) {
    CHECK(x.power_W >= 0);
    CHECK(x.power_W <= 4000 * (1 + 1e-12));
    if (x.segment == 2) CHECK(x.power_W == 0);
  }
  // The ware lags the thermocouple on the ramp.
  const FiringSample& end_ramp = [&]() -> const FiringSample& {
    for (const FiringSample& x : r.samples)
      if (x.time_s >= r.segments[0].end_s) return x;
    return r.samples.back();
  }();
  CHECK(end_ramp.load_inner_K[0] < end_ramp.control_K);
}

TEST_CASE("the same firing on one and two threads gives the same numbers", "[firing]") {
  const ScratchDir dir("firing-threads");
  const SolvedScene s = kiln_model(dir);
  FiringInput in = kiln_firing();
  in.schedule.resize(1);
  FiringOptions one, two;
  one.threads = 1;
  two.threads = 2;
  const FiringResult a = run_firing(s.model, in, one), b = run_firing(s.model, in, two);
  REQUIRE(a.samples.size() == b.samples.size());
  for (std::size_t i = 0; i < a.samples.size(); ++i)
    CHECK(a.samples[i].surface_K == b.samples[i].surface_K);
}

TEST_CASE("firing input is checked", "[firing]") {
  const ScratchDir dir("firing-bad");
  const SolvedScene s = kiln_model(dir);
  FiringInput in = kiln_firing();
  in.control = "chimney";
  CHECK_THROWS_WITH(run_firing(s.model, in), Catch::Contains("'chimney'"));
  in = kiln_firing();
  in.surfaces.push_back({"lid", in.surfaces.back().second});
  CHECK_THROWS_WITH(run_firing(s.model, in), Catch::Contains("'lid'"));
  in = kiln_firing();
  in.schedule[0].rate = 0;
  CHECK_THROWS_WITH(run_firing(s.model, in), Catch::Contains("rate"));
  in = kiln_firing();
  in.surfaces[0].second.layers[0].density = 0;
  CHECK_THROWS_WITH(run_firing(s.model, in), Catch::Contains("floor"));
}

TEST_CASE("hearthray fire runs a schedule and writes its files", "[firing][cli]") {
  const ScratchDir dir("firing-cli");
  write_text(dir / "mesh.obj", box_obj(0.6, 0.6, 0.6));
  const std::string scene = std::string("[mesh]\nfile = \"mesh.obj\"\n") + kKiln + R"(
[firing]
control = "east"
schedule = [{ ramp = "200 K/h", to = "500 C" }, { hold = "10 min" },
            { cool = "natural", to = "300 C" }]
[firing.surface.floor]
layers = [
  { thickness = "50 mm", conductivity = [["100 C", "0.15 W/mK"], ["900 C", "0.25 W/mK"]], density = "600 kg/m3", specific_heat = "1 kJ/kgK" },
]
outside = { room = "20 C", h = "6 W/m2K", emissivity = 0.9 }
[firing.surface.west]
mass = "3 kg"
specific_heat = "900 J/kgK"
)";
  write_text(dir / "scene.toml", scene);
  const CliResult r = run_cli(
      "fire '" + (dir / "scene.toml").string() + "' -o '" + (dir / "out").string() + "' --no-cache",
      dir);
  INFO(r.err);
  REQUIRE(r.status == 0);
  CHECK(r.out.find("schedule completed and followed") != std::string::npos);
  CHECK(r.out.find("carbon monoxide") != std::string::npos);
  CHECK(r.out.find("outer face of 'floor': up to") != std::string::npos);
  for (const char* f : {"report.json", "firing.csv", "firing_temperatures.png", "firing_power.png",
                        "firing_temperatures.svg", "firing_power.svg"})
    CHECK(std::filesystem::exists(dir / "out" / f));
  const std::string csv = slurp(dir / "out" / "firing.csv");
  CHECK(csv.rfind("time_s,time_h,segment,set_point_C,control_C,power_W,floor_C", 0) == 0);
  CHECK(csv.find("floor_outer_face_C") != std::string::npos);
  CHECK(csv.find("west_inside_C") != std::string::npos);

  // Mistakes are named with their line: a ramp without a target, an unknown key, a wrong unit.
  for (const auto& [bad, words] : std::vector<std::pair<std::string, std::string>>{
           {"{ ramp = \"200 K/h\" }", "needs to ="},
           {"{ ramp = \"200 K\", to = \"500 C\" }", "K/h"},
           {"{ soak = \"10 min\" }", "unknown key 'soak'"}}) {
    std::string wrong = scene;
    wrong.replace(wrong.find("{ hold = \"10 min\" }"), 19, bad);
    write_text(dir / "bad.toml", wrong);
    const CliResult b = run_cli("fire '" + (dir / "bad.toml").string() + "' --no-cache", dir);
    INFO(bad);
    CHECK(b.status == 2);
    CHECK(b.err.find(words) != std::string::npos);
    CHECK(b.err.find("bad.toml:") != std::string::npos);
  }
  // A scene without [firing] is refused by `fire`, saying what to add.
  write_text(dir / "steady.toml", std::string("[mesh]\nfile = \"mesh.obj\"\n") + kKiln);
  const CliResult none = run_cli("fire '" + (dir / "steady.toml").string() + "'", dir);
  CHECK(none.status == 2);
  CHECK(none.err.find("no [firing] table") != std::string::npos);
}
