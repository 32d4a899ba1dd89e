// The thermal model on exact view factors (no ray tracing): nodes and faces from a scene file,
// two-sided sheets, leaks folded back in a closed mesh, open scenes refused without a
// surroundings temperature, the per-surface summary and the energy balance.
#include <catch2/catch.hpp>
#include <cmath>
#include <stdexcept>
#include <string>
#include <tuple>
#include <vector>

#include "hearthray/error.hpp"
#include "hearthray/scene_file.hpp"
#include "hearthray/thermal_model.hpp"
#include "hearthray/units.hpp"
#include "support/cli_run.hpp"
#include "support/closed_forms.hpp"
#include "support/meshes.hpp"
#include "support/scene_fixtures.hpp"

using namespace hearthray;
using namespace hearthray::testing;
using Catch::Matchers::Contains;

namespace {

// Exact factors of the unit cube (unit_cube_obj's order: floor, roof, south, north, west,
// east; pairs (0,1), (2,3), (4,5) opposite): Howell C-11 for opposite faces, C-14 for faces
// sharing an edge (tests/support/closed_forms.hpp). `extra_back` adds a face 6, the back of
// the two-sided east wall, which sees nothing (it faces out of the cube).
ViewFactors cube_factors(const PatchSet& patches, bool extra_back = false) {
  const double opposite = parallel_rectangles_aligned(1, 1, 1);
  const double adjacent = perpendicular_rectangles_common_edge(1, 1, 1);
  ViewFactors vf;
  const std::size_t n = patches.size();
  REQUIRE(n == (extra_back ? 7u : 6u));
  std::vector<Eigen::Triplet<double>> entries;
  for (std::size_t i = 0; i < 6; ++i) {
    for (std::size_t j = 0; j < 6; ++j) {
      if (i != j) entries.emplace_back(int(i), int(j), i / 2 == j / 2 ? opposite : adjacent);
    }
  }
  for (const Patch& p : patches.patches) {
    vf.names.push_back(p.name);
    vf.areas.push_back(p.area);
  }
  vf.rays.assign(n, 1000000);
  vf.F.resize(int(n), int(n));
  vf.F.setFromTriplets(entries.begin(), entries.end());
  vf.to_surroundings.assign(n, 0.0);
  vf.to_back_faces.assign(n, 0.0);
  if (extra_back) vf.to_surroundings[6] = 1.0;
  vf.smoothed = true;
  return vf;
}

// Moves `share` of the floor's and the roof's radiation from each other to the surroundings:
// reciprocity and row sums still hold exactly.
void leak(ViewFactors* vf, double share) {
  vf->F.coeffRef(0, 1) -= share;
  vf->F.coeffRef(1, 0) -= share;
  vf->to_surroundings[0] += share;
  vf->to_surroundings[1] += share;
}

double largest_flow(const ExchangeResult& r) {
  double largest = 0;
  for (const NodeResult& n : r.nodes) largest = std::max(largest, std::abs(n.net_radiation_W));
  return largest;
}

}  // namespace

TEST_CASE("one node per surface and one face per patch with two faces for a two-sided sheet",
          "[thermal_model]") {
  const ScratchDir dir("thermal-nodes");
  const std::string body = std::string(kHotFloorColdRoof) +
                           "[surface.east]\ntwo_sided = true\npower = \"50 W\"\n"
                           "convection = { h = \"5 W/m2K\", fluid = \"30 C\" }\n";
  const LoadedScene with =
      load_scene_text(dir, unit_cube_obj(), "[surroundings]\ntemperature = \"20 C\"\n" + body);
  const ViewFactors vf = cube_factors(with.patches, true);
  const ThermalModel m =
      build_thermal_model(thermal_input(with.file, with.scene), with.scene, with.patches, vf);
  REQUIRE(m.nodes.size() == 6);
  REQUIRE(m.faces.size() == 7);
  CHECK(m.nodes[0].name == "floor");
  CHECK(m.nodes[0].condition.kind == ConditionKind::temperature);
  CHECK(m.nodes[0].condition.value == 1000);
  CHECK(m.nodes[5].condition.kind == ConditionKind::power);
  CHECK(m.nodes[5].condition.convection->fluid_K == Approx(303.15));
  CHECK(m.faces[0].emissivity == 0.8);
  CHECK(m.faces[2].emissivity == 0.5);  // from [defaults]
  CHECK(m.faces[5].node == 5);
  CHECK(m.faces[6].node == 5);
  CHECK(m.face_side[5] == Side::front);
  CHECK(m.face_side[6] == Side::back);
  CHECK(m.two_sided[5]);
  CHECK(m.surroundings_K == Approx(293.15));
  CHECK_FALSE(m.mesh_closed);  // the east wall is two-sided: no closed one-sided enclosure
  CHECK_FALSE(m.leaks_folded);
  const ExchangeProblem p = m.problem();
  CHECK(p.view_factors == &m.factors);
  CHECK(p.surroundings_K == m.surroundings_K);

  // The same scene without a surroundings temperature: refused, naming the sheet.
  const LoadedScene without = load_scene_text(dir, unit_cube_obj(), body);
  CHECK_THROWS_WITH(
      build_thermal_model(thermal_input(without.file, without.scene), without.scene,
                          without.patches, vf),
      Contains("the scene is open") && Contains("'east' 50.0 %") && Contains("[surroundings]"));
}

TEST_CASE("leaks are folded onto the diagonal, present or not, rows kept sorted",
          "[thermal_model]") {
  const ScratchDir dir("thermal-fold");
  const LoadedScene l = load_scene_text(dir, unit_cube_obj(), kHotFloorColdRoof);
  // The cube's exact factors (Howell C-11 and C-14) with small exchanges moved so that rows 2
  // and 3 see themselves (a diagonal entry) and rows 0, 1, 3 and 4 lose rays: the fold must
  // add each row's loss to its diagonal, F_ii + F_i,lost, inserting the entry where missing.
  ViewFactors vf = cube_factors(l.patches);
  leak(&vf, 3e-7);
  for (const auto& [i, j, share] : {std::tuple<int, int, double>{2, 3, 1e-3}, {3, 2, 1e-3}}) {
    vf.F.coeffRef(i, j) -= share;
    vf.F.coeffRef(i, i) += share;
  }
  vf.F.coeffRef(3, 4) -= 2e-7;
  vf.F.coeffRef(4, 3) -= 2e-7;
  vf.to_back_faces[3] += 2e-7;
  vf.to_surroundings[4] += 2e-7;
  vf.F.makeCompressed();
  const Eigen::MatrixXd before = Eigen::MatrixXd(vf.F);
  std::vector<double> lost(6);
  for (std::size_t i = 0; i < 6; ++i) lost[i] = vf.to_surroundings[i] + vf.to_back_faces[i];
  const ThermalModel m =
      build_thermal_model(thermal_input(l.file, l.scene), l.scene, l.patches, vf);
  REQUIRE(m.leaks_folded);
  const SparseMatrix& F = m.factors.F;
  CHECK(F.isCompressed());
  CHECK(F.nonZeros() == vf.F.nonZeros() + 3);  // rows 0, 1 and 4 had no diagonal entry
  for (int i = 0; i < 6; ++i) {
    for (int j = 0; j < 6; ++j) {
      CHECK(F.coeff(i, j) == before(i, j) + (i == j ? lost[std::size_t(i)] : 0.0));
    }
    int previous = -1;  // stored columns ascend
    for (SparseMatrix::InnerIterator it(F, i); it; ++it) {
      CHECK(it.col() > previous);
      previous = int(it.col());
    }
    CHECK(m.factors.to_surroundings[std::size_t(i)] == 0);
    CHECK(m.factors.to_back_faces[std::size_t(i)] == 0);
  }
}

TEST_CASE("per-surface summary and energy balance", "[thermal_model]") {
  const ScratchDir dir("thermal-summary");
  const LoadedScene l =
      load_scene_text(dir, unit_cube_obj(),
                      std::string("[surroundings]\ntemperature = \"20 C\"\n") + kHotFloorColdRoof +
                          "[surface.east]\ntwo_sided = true\npower = \"50 W\"\n"
                          "convection = { h = \"5 W/m2K\", fluid = \"30 C\" }\n");
  const ViewFactors vf = cube_factors(l.patches, true);
  const ThermalModel m =
      build_thermal_model(thermal_input(l.file, l.scene), l.scene, l.patches, vf);
  const ExchangeResult r = solve_exchange(m.problem(), ExchangeOptions{});
  REQUIRE(r.status == ExchangeStatus::converged);
  const std::vector<SurfaceHeat> heat = surface_heat(m, r);
  REQUIRE(heat.size() == 6);
  const SurfaceHeat& east = heat[5];
  CHECK(east.two_sided);
  CHECK(east.area_m2 == Approx(2.0));
  CHECK(east.faces == std::vector<std::size_t>{5, 6});
  CHECK(east.net_W == Approx(r.faces[5].net_power + r.faces[6].net_power));
  CHECK(east.radiosity_W_m2 == Approx((r.faces[5].radiosity + r.faces[6].radiosity) / 2));
  CHECK(east.net_flux_W_m2 == Approx(east.net_W / 2));
  // The power put in leaves by radiation and convection (both faces: h A = 5 * 2 W/K).
  CHECK(east.heat_input_W == Approx(50).epsilon(1e-9));
  CHECK(east.convection_W == Approx(10 * (east.temperature_K - 303.15)).epsilon(1e-9));
  CHECK(heat[0].radiosity_W_m2 == r.faces[0].radiosity);

  const HeatBalance b = heat_balance(r);
  CHECK(b.to_surroundings_W == r.surroundings_W);
  CHECK(b.to_surroundings_W > 0);  // the sheet's back radiates to 20 C surroundings
  CHECK(b.heat_input_W ==
        Approx(b.convection_W + b.wall_loss_W + b.to_surroundings_W + b.residual_W));
  CHECK(std::abs(b.residual_W) <= 1e-9 * b.largest_W);
  CHECK(b.largest_W >= std::abs(heat[0].net_W));
}

TEST_CASE("a tiny leak of a closed mesh is folded back and a large one refused",
          "[thermal_model]") {
  const ScratchDir dir("thermal-leak");
  const LoadedScene l = load_scene_text(dir, unit_cube_obj(), kHotFloorColdRoof);
  const ViewFactors exact = cube_factors(l.patches);
  const ThermalModel reference =
      build_thermal_model(thermal_input(l.file, l.scene), l.scene, l.patches, exact);
  CHECK(reference.mesh_closed);
  CHECK(reference.lost_fraction == 0);
  CHECK_FALSE(reference.leaks_folded);
  const ExchangeResult ref = solve_exchange(reference.problem(), ExchangeOptions{});
  REQUIRE(ref.status == ExchangeStatus::converged);

  // 3e-7 of the floor's and the roof's radiation: 1e-7 of all rays, below the 1e-6 limit.
  ViewFactors leaky = exact;
  leak(&leaky, 3e-7);
  const ThermalModel m =
      build_thermal_model(thermal_input(l.file, l.scene), l.scene, l.patches, leaky);
  CHECK(m.leaks_folded);
  CHECK(m.lost_fraction == Approx(1e-7));
  REQUIRE(m.notes.size() == 1);
  CHECK_THAT(m.notes[0], Contains("leaks"));
  CHECK(m.factors.F.coeff(0, 0) == Approx(3e-7));
  for (int i = 0; i < 6; ++i) {
    CHECK(m.factors.to_surroundings[std::size_t(i)] == 0);
    CHECK(m.factors.F.row(i).sum() == Approx(1.0).epsilon(1e-15));
    for (int j = 0; j < 6; ++j) CHECK(m.factors.F.coeff(i, j) == m.factors.F.coeff(j, i));
  }
  // Solves with no surroundings temperature, balances to round-off, moves the answer by the
  // size of the leak only.
  const ExchangeResult r = solve_exchange(m.problem(), ExchangeOptions{});
  REQUIRE(r.status == ExchangeStatus::converged);
  CHECK(r.surroundings_W == 0);
  CHECK(std::abs(r.balance_W) <= 1e-12 * largest_flow(r));
  CHECK(r.nodes[0].net_radiation_W == Approx(ref.nodes[0].net_radiation_W).epsilon(1e-5));

  // With folding turned off the same leak needs a surroundings temperature.
  ThermalModelOptions strict;
  strict.leak_limit = 0;
  CHECK_THROWS_WITH(
      build_thermal_model(thermal_input(l.file, l.scene), l.scene, l.patches, leaky, strict),
      Contains("is closed, yet") && Contains("'floor'"));

  // 1e-3 of the floor's and roof's radiation is no crack: refused without surroundings...
  ViewFactors gap = exact;
  leak(&gap, 1e-3);
  CHECK_THROWS_WITH(build_thermal_model(thermal_input(l.file, l.scene), l.scene, l.patches, gap),
                    Contains("is closed, yet") && Contains("gaps") && Contains("normals"));
  // ...and sent to the surroundings when they have a temperature.
  const LoadedScene open =
      load_scene_text(dir, unit_cube_obj(),
                      std::string("[surroundings]\ntemperature = \"300 K\"\n") + kHotFloorColdRoof);
  const ThermalModel g =
      build_thermal_model(thermal_input(open.file, open.scene), open.scene, open.patches, gap);
  CHECK_FALSE(g.leaks_folded);
  CHECK(g.factors.to_surroundings[0] == Approx(1e-3));
  CHECK(g.surroundings_K == 300);
}

TEST_CASE("the thermal model refuses what it cannot build", "[thermal_model]") {
  const ScratchDir dir("thermal-refuse");
  const LoadedScene l = load_scene_text(dir, unit_cube_obj(), kHotFloorColdRoof);
  const ViewFactors vf = cube_factors(l.patches);

  // A bare mesh: no thermal input at all.
  const SceneFile bare = scene_file_for_mesh((dir / "mesh.obj").string());
  const Scene bare_scene = load_scene(bare);
  CHECK_THROWS_WITH(thermal_input(bare, bare_scene),
                    Contains("is a mesh") && Contains("emissivity"));

  // Thermal input of another scene: a programming mistake, not bad input.
  ThermalInput short_input = thermal_input(l.file, l.scene);
  short_input.surfaces.pop_back();
  CHECK_THROWS_AS(build_thermal_model(short_input, l.scene, l.patches, vf), std::invalid_argument);

  // View factors of another scene.
  ViewFactors small = vf;
  small.names.pop_back();
  small.areas.pop_back();
  CHECK_THROWS_AS(build_thermal_model(thermal_input(l.file, l.scene), l.scene, l.patches, small),
                  InputError);

  ThermalModelOptions bad;
  bad.leak_limit = -1;
  std::string error;
  CHECK_FALSE(bad.IsValid(&error));
  CHECK_THAT(error, Contains("leak_limit"));
  CHECK_THROWS_AS(build_thermal_model(thermal_input(l.file, l.scene), l.scene, l.patches, vf, bad),
                  InputError);

  // A surface with no condition (no default either).
  const LoadedScene none =
      load_scene_text(dir, unit_cube_obj(),
                      "[defaults]\nemissivity = 0.5\n[surface.floor]\ntemperature = "
                      "\"900 K\"\n");
  CHECK_THROWS_WITH(thermal_input(none.file, none.scene),
                    Contains("surface 'roof' has no condition"));
}

TEST_CASE("the energy balance names gross input and what loads take, not their net",
          "[thermal_model]") {
  // Floor at 1000 K (the source), roof at 400 K (the load), four reradiating walls of the unit
  // cube. Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, eq. 13.30 (two surfaces
  // and a reradiating one): q = sigma (T1^4 - T2^4) / [(1 - e1)/(e1 A1) +
  // 1/(A1 F12 + 1/(1/(A1 F1R) + 1/(A2 F2R))) + (1 - e2)/(e2 A2)].
  const ScratchDir dir("thermal-gross");
  const LoadedScene l = load_scene_text(dir, unit_cube_obj(), kHotFloorColdRoof);
  const ViewFactors vf = cube_factors(l.patches);
  const ThermalModel m =
      build_thermal_model(thermal_input(l.file, l.scene), l.scene, l.patches, vf);
  const ExchangeResult r = solve_exchange(m.problem(), ExchangeOptions{});
  REQUIRE(r.status == ExchangeStatus::converged);
  const double F12 = parallel_rectangles_aligned(1, 1, 1), F1R = 1 - F12;
  const double q = kStefanBoltzmann * (std::pow(1000.0, 4) - std::pow(400.0, 4)) /
                   ((1 - 0.8) / 0.8 + 1 / (F12 + 1 / (2 / F1R)) + (1 - 0.6) / 0.6);
  const HeatBalance b = heat_balance(m, r);
  CHECK(b.gross_input_W == Approx(q).epsilon(1e-9));
  CHECK(b.taken_out_W == Approx(q).epsilon(1e-9));  // the roof takes it all
  CHECK(std::abs(b.heat_input_W) <= 1e-9 * q);      // the net that used to be printed: ~0
  CHECK(b.sources == std::vector<std::string>{"floor"});
  CHECK(b.sinks == std::vector<std::string>{"roof"});
  CHECK(b.gross_input_W ==
        Approx(b.taken_out_W + b.convection_W + b.wall_loss_W + b.to_surroundings_W + b.residual_W)
            .epsilon(1e-12));
}
