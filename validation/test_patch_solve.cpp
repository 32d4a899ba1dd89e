// `hearthray solve` with surfaces cut into patches: surface results are the sums over their
// patches, and they agree within statistics with a whole-surface run and with the exact
// answer. Black surfaces at fixed temperatures make the net heat flows linear in the view
// factors, so cutting surfaces into patches changes nothing but the noise, and the noise has a
// rigorous bound: each patch's ray estimate of its net flow is the mean of a quantity that
// lies in [min_j c_j, max_j c_j], with c_j = A_p sigma (T_p^4 - T_j^4), so its variance is at
// most (max c - min c)^2 / (4 N_p) (Popoviciu's inequality on variances).
#include <catch2/catch.hpp>
#include <cmath>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <sstream>

#include "hearthray/units.hpp"
#include "support/cli_run.hpp"
#include "support/closed_forms.hpp"
#include "support/meshes.hpp"

using namespace hearthray;
using namespace hearthray::testing;
using json = nlohmann::json;

namespace {

const std::map<std::string, double> kTemperature = {{"floor", 1000}, {"roof", 400}, {"north", 300},
                                                    {"south", 500},  {"east", 600}, {"west", 700}};

double Eb(double kelvin) {
  return kStefanBoltzmann * std::pow(kelvin, 4);
}

std::string scene_toml(const std::string& extra) {
  std::ostringstream s;
  s << "[mesh]\nfile = \"mesh.obj\"\n" << extra << "[defaults]\nemissivity = 1.0\n";
  for (const auto& [name, t] : kTemperature)
    s << "[surface." << name << "]\ntemperature = \"" << t << " K\"\n";
  return s.str();
}

json solve(const ScratchDir& dir, const std::string& sub, const std::string& extra) {
  std::filesystem::create_directories(dir / sub);
  write_text(dir / sub / "mesh.obj", unit_cube_obj());
  write_text(dir / sub / "scene.toml", scene_toml(extra));
  const CliResult r = run_cli("solve " + (dir / sub / "scene.toml").string() + " --quiet -o " +
                                  (dir / sub / "out").string(),
                              dir);
  INFO(r.err);
  REQUIRE(r.status == 0);
  return json::parse(slurp(dir / sub / "out" / "report.json"));
}

double net_of(const json& report, const std::string& name) {
  for (const json& s : report.at("surfaces"))
    if (s.at("name") == name) return s.at("net_W").get<double>();
  FAIL("no surface " << name);
  return 0;
}

// Exact net flow of a black unit-cube face at the temperatures above, on Howell's cube factors
// (C-11 opposite, C-14 adjacent).
double exact_net(const std::string& name) {
  const double opposite = parallel_rectangles_aligned(1, 1, 1);
  const double adjacent = perpendicular_rectangles_common_edge(1, 1, 1);
  const std::map<std::string, std::string> across = {{"floor", "roof"},  {"roof", "floor"},
                                                     {"north", "south"}, {"south", "north"},
                                                     {"east", "west"},   {"west", "east"}};
  double q = 0;
  for (const auto& [other, t] : kTemperature) {
    if (other == name) continue;
    const double f = other == across.at(name) ? opposite : adjacent;
    q += f * (Eb(kTemperature.at(name)) - Eb(t));
  }
  return q;  // A = 1 m^2
}

// Popoviciu bound on the standard error of a face's net flow from `patches` patches of equal
// area, each with `rays` rays.
double noise_bound(const std::string& name, int patches, double rays) {
  double lo = 0, hi = 0;  // c_j over the other faces and the face itself (c = 0)
  for (const auto& [other, t] : kTemperature) {
    const double c = (Eb(kTemperature.at(name)) - Eb(t)) / patches;
    lo = std::min(lo, c);
    hi = std::max(hi, c);
  }
  return std::sqrt(patches * (hi - lo) * (hi - lo) / (4 * rays));
}

}  // namespace

TEST_CASE("solve with patches: sums over patches agree with whole surfaces and the exact flows",
          "[validation][patches]") {
  const ScratchDir dir("patch-solve");
  const double whole_rays = 200000, patch_rays = 20000;
  const json whole = solve(dir, "whole", "[rays]\nper_patch = 200_000\n");
  const json patched = [&] {
    std::filesystem::create_directories(dir / "patched");
    write_text(dir / "patched" / "mesh.obj", unit_cube_obj());
    std::string toml = scene_toml("[rays]\nper_patch = 20_000\n");
    toml.replace(toml.find("[defaults]\n"), 11, "[defaults]\npatches = \"0.25 m\"\n");
    write_text(dir / "patched" / "scene.toml", toml);
    const CliResult r = run_cli("solve " + (dir / "patched" / "scene.toml").string() +
                                    " --quiet -o " + (dir / "patched" / "out").string(),
                                dir);
    INFO(r.err);
    REQUIRE(r.status == 0);
    return json::parse(slurp(dir / "patched" / "out" / "report.json"));
  }();

  for (const auto& [name, t] : kTemperature) {
    INFO(name);
    const double exact = exact_net(name);
    const double q_whole = net_of(whole, name), q_patched = net_of(patched, name);
    const double se_whole = noise_bound(name, 1, whole_rays);
    const double se_patched = noise_bound(name, 16, patch_rays);
    INFO("exact " << exact << " W, whole " << q_whole << " +- " << se_whole << ", patches "
                  << q_patched << " +- " << se_patched);
    CHECK(std::fabs(q_whole - exact) <= 4 * se_whole);
    CHECK(std::fabs(q_patched - exact) <= 4 * se_patched);
    CHECK(std::fabs(q_patched - q_whole) <= 4 * std::hypot(se_whole, se_patched));
  }

  // The surface rows of the report are the sums of their patch rows in surfaces.csv.
  std::ifstream csv(dir / "patched" / "out" / "surfaces.csv");
  std::string line;
  std::getline(csv, line);  // header: surface,face,side,area_m2,...,net_W,...
  std::map<std::string, double> sum;
  std::map<std::string, int> rows;
  while (std::getline(csv, line)) {
    std::vector<std::string> cells;
    std::stringstream ss(line);
    for (std::string cell; std::getline(ss, cell, ',');) cells.push_back(cell);
    REQUIRE(cells.size() >= 11);
    sum[cells[0]] += std::stod(cells[10]);  // net_W
    ++rows[cells[0]];
  }
  for (const auto& [name, t] : kTemperature) {
    CHECK(rows[name] == 16);
    CHECK(sum[name] == Approx(net_of(patched, name)).epsilon(1e-12).margin(1e-9));
  }
}
