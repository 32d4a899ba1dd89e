// `hearthray solve` with surfaces cut into patches: surface results are the sums over their
// patches, and they agree within statistics with a whole-surface run and with the exact
// answer. Black surfaces at fixed temperatures make the net heat flows linear in the view
// factors, so cutting surfaces into patches changes nothing but the noise.
//
// The noise is computed, not bounded. Each patch p sends N_p rays; its row of raw factors is a
// multinomial proportion with covariance Sigma_p = (diag(F_p) - F_p F_p^T) / N_p at the exact
// factors F_p. Smoothing is the constrained maximum-likelihood estimate (Daun, Morton & Howell
// 2005, see smoothing.hpp) under the reciprocity constraints C F = 0 (A_p F_pq = A_q F_qp); an
// ML estimate under linear equality constraints has the asymptotic covariance
//   V = Sigma - Sigma C^T (C Sigma C^T)^-1 C Sigma
// (Aitchison & Silvey, "Maximum-likelihood estimation of parameters subject to restraints",
// Ann. Math. Statist. 29, 1958; recalled from memory). Row sums need no constraint of their
// own: every raw row already sums to one and Sigma_p 1 = 0, so the correction keeps them. A
// face's net flow is Q_I = sum_{p in I} sum_q A_p F_pq (Eb_I - Eb_J(q)) = g^T F, so its
// standard deviation is sqrt(g^T V g). The exact patch-to-patch factors come from Lambert's
// contour formula for an element to each triangle of the receiving patch (element_to_polygon,
// exact), averaged over the emitting patch by a centroid rule; the rule's error (well under 1 %
// of a factor) changes the standard deviation by less than that. Every check is at 4 standard
// deviations.
#include <Eigen/Dense>
#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <fstream>
#include <functional>
#include <map>
#include <nlohmann/json.hpp>
#include <sstream>
#include <vector>

#include "hearthray/patches.hpp"
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

// The patches of the unit cube as the solve cuts them (size 0: whole faces), from the library's
// own patch planning, so that the rows below are the rows the solve traced.
struct CubePatches {
  Scene scene;
  PatchSet patches;
};

CubePatches cube_patches(double size) {
  CubePatches c;
  const Scene base = load_obj_text(unit_cube_obj(), "cube");
  std::vector<PatchSpec> specs(base.surfaces.size());
  if (size > 0) {
    for (PatchSpec& s : specs) s = {PatchSpec::Mode::size, size};
  }
  c.scene = subdivide(base, specs);
  c.patches = make_patches(c.scene, specs);
  return c;
}

// Exact factors F(p, q) between the patches (zero between patches of one face), each row
// scaled to sum to one (it does to the centroid rule's error already: the cube is closed).
Eigen::MatrixXd exact_patch_factors(const CubePatches& c) {
  const Scene& scene = c.scene;
  const PatchSet& ps = c.patches;
  const std::size_t n = ps.size();
  auto corners = [&](std::uint32_t t) {
    const Triangle& tri = scene.triangles[t];
    return std::vector<Vec3>{scene.vertices[tri.v[0]], scene.vertices[tri.v[1]],
                             scene.vertices[tri.v[2]]};
  };
  Eigen::MatrixXd F = Eigen::MatrixXd::Zero(Eigen::Index(n), Eigen::Index(n));
  for (std::size_t p = 0; p < n; ++p) {
    for (std::size_t q = 0; q < n; ++q) {
      if (ps.patches[p].surface == ps.patches[q].surface) continue;
      double exchange = 0;  // A_p F_pq
      for (std::uint32_t k = ps.triangle_offset[p]; k < ps.triangle_offset[p + 1]; ++k) {
        const std::uint32_t t = ps.triangle_index[k];
        const std::vector<Vec3> v = corners(t);
        const Vec3 normal = scene.normal(t);
        const double average = triangle_average(v[0], v[1], v[2], 2, [&](const Vec3& x) {
          double f = 0;
          for (std::uint32_t m = ps.triangle_offset[q]; m < ps.triangle_offset[q + 1]; ++m)
            f += element_to_polygon(x, normal, corners(ps.triangle_index[m]));
          return f;
        });
        exchange += scene.triangle_area(t) * average;
      }
      F(Eigen::Index(p), Eigen::Index(q)) = exchange / ps.patches[p].area;
    }
    const double sum = F.row(Eigen::Index(p)).sum();
    REQUIRE(sum == Approx(1).epsilon(0.01));
    F.row(Eigen::Index(p)) /= sum;
  }
  return F;
}

// Standard deviation of the smoothed estimate of g^T F (g indexed like F), with `rays` rays
// per patch: sqrt(g^T V g), V the constrained-ML covariance at the top of the file. The
// product with (C Sigma C^T)^-1 is a conjugate-gradient solve, matrix-free: Sigma is one small
// block per row and C touches two entries per constraint.
double smoothed_sd(const Eigen::MatrixXd& F, const std::vector<double>& area, double rays,
                   const Eigen::MatrixXd& g) {
  const Eigen::Index n = F.rows();
  auto sigma = [&](const Eigen::MatrixXd& y) {  // Sigma y, row by row
    Eigen::MatrixXd out(n, n);
    for (Eigen::Index p = 0; p < n; ++p) {
      const double mean = F.row(p).dot(y.row(p));
      out.row(p) = (F.row(p).array() * (y.row(p).array() - mean)).matrix() / rays;
    }
    return out;
  };
  std::vector<std::pair<Eigen::Index, Eigen::Index>> pairs;  // one constraint per pair p < q
  for (Eigen::Index p = 0; p < n; ++p)
    for (Eigen::Index q = p + 1; q < n; ++q)
      if (F(p, q) > 0) pairs.emplace_back(p, q);
  const auto m = Eigen::Index(pairs.size());
  auto apply_c = [&](const Eigen::MatrixXd& y) {  // C y: A_p y_pq - A_q y_qp
    Eigen::VectorXd out(m);
    for (Eigen::Index k = 0; k < m; ++k) {
      const auto [p, q] = pairs[std::size_t(k)];
      out[k] = area[std::size_t(p)] * y(p, q) - area[std::size_t(q)] * y(q, p);
    }
    return out;
  };
  auto apply_ct = [&](const Eigen::VectorXd& x) {  // C^T x
    Eigen::MatrixXd out = Eigen::MatrixXd::Zero(n, n);
    for (Eigen::Index k = 0; k < m; ++k) {
      const auto [p, q] = pairs[std::size_t(k)];
      out(p, q) += area[std::size_t(p)] * x[k];
      out(q, p) -= area[std::size_t(q)] * x[k];
    }
    return out;
  };
  auto apply_m = [&](const Eigen::VectorXd& x) { return apply_c(sigma(apply_ct(x))); };

  const Eigen::MatrixXd sigma_g = sigma(g);
  const double raw_variance = (g.array() * sigma_g.array()).sum();
  const Eigen::VectorXd b = apply_c(sigma_g);
  // Conjugate gradients on (C Sigma C^T) x = b, Jacobi-preconditioned.
  Eigen::VectorXd diag(m);
  for (Eigen::Index k = 0; k < m; ++k) {
    const auto [p, q] = pairs[std::size_t(k)];
    const double ap = area[std::size_t(p)], aq = area[std::size_t(q)];
    diag[k] = (ap * ap * F(p, q) * (1 - F(p, q)) + aq * aq * F(q, p) * (1 - F(q, p))) / rays;
  }
  Eigen::VectorXd x = Eigen::VectorXd::Zero(m), r = b;
  Eigen::VectorXd z = r.cwiseQuotient(diag), d = z;
  double rz = r.dot(z);
  int iterations = 0;
  while (r.norm() > 1e-12 * b.norm() && iterations < 10000) {
    const Eigen::VectorXd md = apply_m(d);
    const double alpha = rz / d.dot(md);
    x += alpha * d;
    r -= alpha * md;
    z = r.cwiseQuotient(diag);
    const double next = r.dot(z);
    d = z + (next / rz) * d;
    rz = next;
    ++iterations;
  }
  REQUIRE(r.norm() <= 1e-12 * b.norm());
  const double variance = raw_variance - b.dot(x);
  REQUIRE(variance > 0);
  REQUIRE(variance <= raw_variance);
  return std::sqrt(variance);
}

// Standard deviation of each face's net flow, in a run of `rays` rays per patch on the cube cut
// at `size` (0: whole faces).
std::map<std::string, double> net_flow_sd(double size, double rays) {
  const CubePatches c = cube_patches(size);
  const Eigen::MatrixXd F = exact_patch_factors(c);
  const Eigen::Index n = F.rows();
  std::vector<double> area;
  for (const Patch& p : c.patches.patches) area.push_back(p.area);
  auto name_of = [&](Eigen::Index p) {
    return c.scene.surfaces[c.patches.patches[std::size_t(p)].surface].name;
  };
  std::map<std::string, double> sd;
  for (const auto& [name, t] : kTemperature) {
    Eigen::MatrixXd g = Eigen::MatrixXd::Zero(n, n);  // dQ / dF(p, q)
    for (Eigen::Index p = 0; p < n; ++p) {
      if (name_of(p) != name) continue;
      for (Eigen::Index q = 0; q < n; ++q)
        g(p, q) = area[std::size_t(p)] * (Eb(t) - Eb(kTemperature.at(name_of(q))));
    }
    sd[name] = smoothed_sd(F, area, rays, g);
  }
  return sd;
}

}  // namespace

TEST_CASE("solve with patches: sums over patches agree with whole surfaces and the exact flows",
          "[validation][patches]") {
  const ScratchDir dir("patch-solve");
  const double whole_rays = 200000, patch_rays = 20000;
  const std::map<std::string, double> sd_whole = net_flow_sd(0, whole_rays);
  const std::map<std::string, double> sd_patched = net_flow_sd(0.25, patch_rays);
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
    const double se_whole = sd_whole.at(name);
    const double se_patched = sd_patched.at(name);
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
  std::map<std::string, std::vector<double>> areas;
  while (std::getline(csv, line)) {
    std::vector<std::string> cells;
    std::stringstream ss(line);
    for (std::string cell; std::getline(ss, cell, ',');) cells.push_back(cell);
    REQUIRE(cells.size() >= 11);
    sum[cells[0]] += std::stod(cells[10]);  // net_W
    ++rows[cells[0]];
    areas[cells[0]].push_back(std::stod(cells[3]));  // area_m2
  }
  // The patches the variances above were computed on are the ones the solve used.
  const CubePatches planned = cube_patches(0.25);
  std::map<std::string, std::vector<double>> planned_areas;
  for (const Patch& p : planned.patches.patches)
    planned_areas[planned.scene.surfaces[p.surface].name].push_back(p.area);
  for (const auto& [name, t] : kTemperature) {
    CHECK(rows[name] == 16);
    CHECK(sum[name] == Approx(net_of(patched, name)).epsilon(1e-12).margin(1e-9));
    std::vector<double>& solved = areas[name];
    std::vector<double>& mine = planned_areas[name];
    std::sort(solved.begin(), solved.end());
    std::sort(mine.begin(), mine.end());
    REQUIRE(solved.size() == mine.size());
    for (std::size_t k = 0; k < mine.size(); ++k) CHECK(solved[k] == Approx(mine[k]).epsilon(1e-9));
  }
}
