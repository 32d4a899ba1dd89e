// Benchmark (not a test): the exchange solve on synthetic enclosures of N faces, its time and
// the process's peak memory (getrusage ru_maxrss).
//
// The enclosure: a random sparse symmetric exchange-area matrix S (about `per_row` non-zeros
// per row, no self-view), each face's area the sum of its row, so that F_ij = S_ij / A_i is
// exactly reciprocal and every row of F sums to 1: a closed enclosure. One node per face (a
// patch of its own): a fraction at fixed temperatures (400..1400 K), the rest alternately
// adiabatic and powered (2 kW/m^2), every fourth of those with convection to 300 K air.
//
//   hearthray_bench_exchange [faces] [per_row] [fixed_fraction]
//       one large-path solve; prints time, iterations, residuals and peak memory.
//   hearthray_bench_exchange --crossover [per_row]
//       dense path against large path at 500, 1000, 2000 and 5000 faces, with one node per
//       face and with 20 surfaces, to choose ExchangeOptions::dense_face_limit.
#include <sys/resource.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <random>
#include <string>
#include <vector>

#include "hearthray/exchange.hpp"

using namespace hearthray;

namespace {

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

double peak_mib() {
  rusage usage{};
  getrusage(RUSAGE_SELF, &usage);
  return usage.ru_maxrss / 1024.0;  // ru_maxrss is in KiB on Linux
}

// Partners of face i in the random symmetric pattern: face i draws per_row / 2 partners (and
// is drawn by about as many) from a stream keyed by i, so the pattern can be drawn twice
// (count, then fill) without storing it.
template <class Visit>
void draw_partners(std::size_t faces, std::size_t per_row, std::uint64_t i, Visit visit) {
  std::mt19937_64 rng(0x9e3779b97f4a7c15ULL * (i + 1));
  std::uniform_int_distribution<std::size_t> pick(0, faces - 2);
  std::uniform_real_distribution<double> weight(0.1, 1.0);
  for (std::size_t d = 0; d < per_row / 2; ++d) {
    std::size_t j = pick(rng);
    if (j >= i) ++j;  // never i itself
    visit(j, weight(rng));
  }
}

// F of the closed synthetic enclosure, filled straight into Eigen's compressed storage.
ViewFactors synthetic_factors(std::size_t n, std::size_t per_row) {
  std::vector<std::size_t> count(n + 1, 0);
  for (std::size_t i = 0; i < n; ++i) {
    draw_partners(n, per_row, i, [&](std::size_t j, double) {
      ++count[i];
      ++count[j];
    });
  }
  ViewFactors vf;
  vf.F.resize(Eigen::Index(n), Eigen::Index(n));
  std::size_t total = 0;
  for (std::size_t i = 0; i < n; ++i) total += count[i];
  vf.F.resizeNonZeros(Eigen::Index(total));
  int* outer = vf.F.outerIndexPtr();
  int* inner = vf.F.innerIndexPtr();
  double* value = vf.F.valuePtr();
  outer[0] = 0;
  for (std::size_t i = 0; i < n; ++i) outer[i + 1] = outer[i] + int(count[i]);
  std::vector<int> fill(outer, outer + n);
  for (std::size_t i = 0; i < n; ++i) {
    draw_partners(n, per_row, i, [&](std::size_t j, double w) {
      inner[fill[i]] = int(j), value[fill[i]++] = w;
      inner[fill[j]] = int(i), value[fill[j]++] = w;
    });
  }
  // Sort each row, merge repeated partners, close the gaps.
  std::size_t out = 0;
  std::vector<std::pair<int, double>> row;
  vf.areas.assign(n, 0.0);
  for (std::size_t i = 0; i < n; ++i) {
    row.clear();
    for (int p = outer[i]; p < outer[i + 1]; ++p) row.emplace_back(inner[p], value[p]);
    std::sort(row.begin(), row.end());
    outer[i] = int(out);
    for (std::size_t p = 0; p < row.size(); ++p) {
      if (p > 0 && row[p].first == row[p - 1].first) {
        value[out - 1] += row[p].second;
        continue;
      }
      inner[out] = row[p].first;
      value[out++] = row[p].second;
    }
    for (std::size_t p = outer[i]; p < out; ++p) vf.areas[i] += value[p];
  }
  outer[n] = int(out);
  vf.F.resizeNonZeros(Eigen::Index(out));
  for (std::size_t i = 0; i < n; ++i) {
    for (int p = outer[i]; p < outer[i + 1]; ++p) value[p] /= vf.areas[i];
  }
  vf.names.resize(n);
  vf.rays.assign(n, 0);
  vf.to_surroundings.assign(n, 0.0);
  vf.to_back_faces.assign(n, 0.0);
  return vf;
}

// A box furnace [0, Lx] x [0, Ly] x [0, Lz] with square patches of side about h on its six
// walls, front sides inward. F by Monte Carlo as the engine makes it (uniform points, cosine
// directions, `rays` per patch; the box is convex, so the first wall a ray meets is the one it
// leaves through), then exchange areas symmetrised, S = (A_i F_ij + A_j F_ji) / 2, and each
// row closed, A_i = sum_j S_ij, F = S / A: reciprocal and closed, like smoothed factors.
struct Box {
  double size[3];
  struct Wall {
    int axis;    // normal along this axis
    bool high;   // at size[axis] (normal points down the axis) or at 0
    int u, v;    // in-plane axes
    int nu, nv;  // patches along u and v
    std::size_t first;
  };
  std::vector<Wall> walls;
  std::size_t patches = 0;

  Box(double lx, double ly, double lz, std::size_t target) : size{lx, ly, lz} {
    const double total = 2 * (lx * ly + ly * lz + lz * lx);
    const double h = std::sqrt(total / double(target));
    for (int axis = 0; axis < 3; ++axis) {
      for (bool high : {false, true}) {
        Wall w{axis, high, (axis + 1) % 3, (axis + 2) % 3, 0, 0, patches};
        w.nu = std::max(1, int(std::lround(size[w.u] / h)));
        w.nv = std::max(1, int(std::lround(size[w.v] / h)));
        patches += std::size_t(w.nu) * std::size_t(w.nv);
        walls.push_back(w);
      }
    }
  }
  int wall_of(std::size_t patch) const {
    int w = 0;
    while (w + 1 < int(walls.size()) && walls[w + 1].first <= patch) ++w;
    return w;
  }
  double patch_area(const Wall& w) const { return size[w.u] / w.nu * size[w.v] / w.nv; }
  std::size_t patch_at(const Wall& w, const double p[3]) const {
    const int iu = std::min(w.nu - 1, int(p[w.u] / size[w.u] * w.nu));
    const int iv = std::min(w.nv - 1, int(p[w.v] / size[w.v] * w.nv));
    return w.first + std::size_t(iu) * w.nv + std::size_t(iv);
  }
};

ViewFactors box_factors(const Box& box, std::size_t rays) {
  const std::size_t n = box.patches;
  SparseMatrix F(static_cast<Eigen::Index>(n), static_cast<Eigen::Index>(n));
  F.resizeNonZeros(Eigen::Index(n * rays));
  int* outer = F.outerIndexPtr();
  std::size_t out = 0;
  std::vector<std::size_t> hits;
  std::vector<double> area(n);
  for (std::size_t i = 0; i < n; ++i) {
    const Box::Wall& w = box.walls[box.wall_of(i)];
    area[i] = box.patch_area(w);
    const std::size_t local = i - w.first;
    const double du = box.size[w.u] / w.nu, dv = box.size[w.v] / w.nv;
    const double u0 = double(local / w.nv) * du, v0 = double(local % w.nv) * dv;
    std::mt19937_64 rng(0x2545f4914f6cdd1dULL * (i + 1));
    std::uniform_real_distribution<double> unit(0.0, 1.0);
    hits.clear();
    for (std::size_t r = 0; r < rays; ++r) {
      double p[3], d[3];
      p[w.axis] = w.high ? box.size[w.axis] : 0.0;
      p[w.u] = u0 + du * unit(rng);
      p[w.v] = v0 + dv * unit(rng);
      // Cosine-weighted direction about the inward normal (Malley's method).
      const double radius = std::sqrt(unit(rng)), phi = 2 * 3.14159265358979323846 * unit(rng);
      d[w.u] = radius * std::cos(phi);
      d[w.v] = radius * std::sin(phi);
      d[w.axis] = std::sqrt(std::max(0.0, 1 - radius * radius)) * (w.high ? -1 : 1);
      double t_best = 1e300;
      int axis_best = 0;
      for (int a = 0; a < 3; ++a) {
        if (d[a] == 0) continue;
        const double t = ((d[a] > 0 ? box.size[a] : 0.0) - p[a]) / d[a];
        if (t > 0 && t < t_best) t_best = t, axis_best = a;
      }
      double q[3];
      for (int a = 0; a < 3; ++a) q[a] = std::clamp(p[a] + t_best * d[a], 0.0, box.size[a]);
      const int wall = 2 * axis_best + (d[axis_best] > 0 ? 1 : 0);
      hits.push_back(box.patch_at(box.walls[wall], q));
    }
    std::sort(hits.begin(), hits.end());
    outer[i] = int(out);
    for (std::size_t r = 0; r < hits.size(); ++r) {
      if (r > 0 && hits[r] == hits[r - 1]) {
        F.valuePtr()[out - 1] += 1.0 / double(rays);
        continue;
      }
      F.innerIndexPtr()[out] = int(hits[r]);
      F.valuePtr()[out++] = 1.0 / double(rays);
    }
  }
  outer[n] = int(out);
  F.resizeNonZeros(Eigen::Index(out));
  // Symmetrise the exchange areas and close the rows.
  const Eigen::Map<const Eigen::VectorXd> A(area.data(), Eigen::Index(n));
  SparseMatrix S = A.asDiagonal() * F;
  F = SparseMatrix(S.transpose());
  S = 0.5 * (S + F);
  F.resize(0, 0);
  F.data().squeeze();
  ViewFactors vf;
  const Eigen::VectorXd row = S * Eigen::VectorXd::Ones(Eigen::Index(n));
  vf.areas.assign(row.data(), row.data() + n);
  vf.F = row.cwiseInverse().asDiagonal() * S;
  vf.names.resize(n);
  vf.rays.assign(n, rays);
  vf.to_surroundings.assign(n, 0.0);
  vf.to_back_faces.assign(n, 0.0);
  return vf;
}

// The box as a furnace, one node per patch: the floor (z = 0) a load at 900 K, the roof
// (z = Lz) electric heaters at 20 kW/m^2, the four side walls refractory: adiabatic with a
// wall loss of 1.5 W/(m^2 K) to 300 K. In `tunnel` form the two end walls (x = 0, x = Lx) are
// at 1400 K and 600 K and everything else reradiates (adiabatic, no loss).
// A positive `emissivity` replaces the emissivities of all faces.
ExchangeProblem box_problem(const Box& box, const ViewFactors& vf, bool tunnel,
                            double emissivity = 0) {
  ExchangeProblem p;
  p.view_factors = &vf;
  for (std::size_t i = 0; i < box.patches; ++i) {
    const Box::Wall& w = box.walls[box.wall_of(i)];
    NodeCondition c;
    if (tunnel) {
      if (w.axis == 0) {
        c = {ConditionKind::temperature, w.high ? 600.0 : 1400.0, {}, {}};
      } else {
        c = {ConditionKind::adiabatic, 0.0, {}, {}};
      }
    } else if (w.axis == 2) {
      c = w.high ? NodeCondition{ConditionKind::heat_flux, 2e4, {}, {}}
                 : NodeCondition{ConditionKind::temperature, 900.0, {}, {}};
    } else {
      c = {ConditionKind::adiabatic, 0.0, {}, WallLoss{1.5, 300.0}};
    }
    p.nodes.push_back({"p" + std::to_string(i), c});
    const double eps = tunnel ? 0.8 : (w.axis == 2 ? (w.high ? 0.9 : 0.85) : 0.7);
    p.faces.push_back({std::uint32_t(i), emissivity > 0 ? emissivity : eps});
    // The patch's centre (for the preconditioner's aggregates, as the pipeline gives them).
    const std::size_t local = i - w.first;
    double at[3];
    at[w.axis] = w.high ? box.size[w.axis] : 0.0;
    at[w.u] = (double(local / w.nv) + 0.5) * box.size[w.u] / w.nu;
    at[w.v] = (double(local % w.nv) + 0.5) * box.size[w.v] / w.nv;
    p.face_centres.push_back(Vec3{at[0], at[1], at[2]});
  }
  return p;
}

// Nodes: `surfaces` = 0 gives one node per face; otherwise faces are spread over that many
// nodes (face i on node i % surfaces).
ExchangeProblem synthetic_problem(const ViewFactors& vf, double fixed_fraction,
                                  std::size_t surfaces) {
  const std::size_t n = vf.areas.size();
  const std::size_t nodes = surfaces == 0 ? n : surfaces;
  ExchangeProblem p;
  p.view_factors = &vf;
  std::mt19937_64 rng(7);
  std::uniform_real_distribution<double> unit(0.0, 1.0);
  const std::size_t fixed_nodes = std::max<std::size_t>(1, std::size_t(fixed_fraction * nodes));
  for (std::size_t k = 0; k < nodes; ++k) {
    NodeCondition c;
    // Fixed nodes spread evenly through the face order.
    const bool fixed = (k * fixed_nodes) / nodes != ((k + 1) * fixed_nodes) / nodes;
    if (fixed) {
      c = {ConditionKind::temperature, 400.0 + 1000.0 * unit(rng), {}, {}};
    } else if (k % 2 == 0) {
      c = {ConditionKind::adiabatic, 0.0, {}, {}};
    } else {
      c = {ConditionKind::heat_flux, 2000.0, {}, {}};
    }
    if (!fixed && k % 4 < 2) c.convection = Convection{10.0, 300.0};
    p.nodes.push_back({"n" + std::to_string(k), c});
  }
  for (std::size_t i = 0; i < n; ++i) {
    p.faces.push_back({std::uint32_t(i % nodes), 0.3 + 0.65 * unit(rng)});
  }
  return p;
}

void print_result(const char* label, const ExchangeResult& r, double seconds) {
  std::printf(
      "  %-6s %9.4f s  Newton %2d  GMRES %5d  status %s  node residual %.2e W  "
      "balance %.2e W\n",
      label, seconds, r.iterations, r.linear_iterations,
      r.status == ExchangeStatus::converged ? "converged" : "FAILED", r.final_residual_W,
      r.balance_W);
}

void compare(const ExchangeProblem& p, int repeats) {
  const std::size_t n = p.faces.size();
  std::printf("%zu faces, %zu nodes, %ld non-zeros\n", n, p.nodes.size(),
              long(p.view_factors->F.nonZeros()));
  ExchangeOptions dense, large;
  dense.dense_face_limit = int(n);
  large.dense_face_limit = 0;
  ExchangeResult a, b;
  auto start = std::chrono::steady_clock::now();
  for (int r = 0; r < repeats; ++r) a = solve_exchange(p, large);
  print_result("large", a, seconds_since(start) / repeats);
  start = std::chrono::steady_clock::now();
  for (int r = 0; r < repeats; ++r) b = solve_exchange(p, dense);
  print_result("dense", b, seconds_since(start) / repeats);
  double worst = 0;
  for (std::size_t k = 0; k < p.nodes.size(); ++k) {
    worst = std::max(worst, std::abs(a.nodes[k].temperature_K / b.nodes[k].temperature_K - 1));
  }
  std::printf("  largest relative temperature difference %.2e\n", worst);
}

int repeats(std::size_t faces) {
  return faces <= 300 ? 50 : faces <= 1000 ? 5 : 1;
}

int crossover(std::size_t per_row) {
  const std::vector<std::size_t> sizes = {50, 100, 200, 300, 500, 1000, 2000, 5000};
  std::printf("dense path against large path, ~%zu non-zeros/row (times: mean of repeats)\n",
              per_row);
  for (std::size_t surfaces : {std::size_t(0), std::size_t(20)}) {
    std::printf("== random closed enclosure, %s\n",
                surfaces == 0 ? "one node per face" : "faces spread over 20 nodes");
    for (std::size_t n : sizes) {
      const ViewFactors vf = synthetic_factors(n, std::min(per_row, n / 2));
      compare(synthetic_problem(vf, 0.5, surfaces), repeats(n));
    }
  }
  std::printf("== box furnace 4 x 3 x 2.5 m, Monte Carlo factors, one node per patch\n");
  for (std::size_t n : sizes) {
    const Box box(4, 3, 2.5, n);
    const ViewFactors vf = box_factors(box, per_row);
    compare(box_problem(box, vf, false), repeats(n));
  }
  return 0;
}

// Peak memory is reset after the problem is built (Linux: writing 5 to clear_refs resets the
// resident-set high-water mark that ru_maxrss reports), so the figure is that of the solve:
// F, the problem and the solver's own vectors.
void reset_peak() {
  if (FILE* f = std::fopen("/proc/self/clear_refs", "w")) {
    std::fputs("5", f);
    std::fclose(f);
  }
}

int solve_and_report(const ViewFactors& vf, const ExchangeProblem& p, double build_s) {
  const double F_mib = vf.F.nonZeros() * (sizeof(double) + sizeof(int)) / 1048576.0;
  std::size_t fixed = 0;
  for (const auto& node : p.nodes) fixed += node.condition.kind == ConditionKind::temperature;
  std::printf(
      "%zu faces, %zu nodes (%zu fixed), %ld non-zeros in F (%.0f MiB); built in "
      "%.2f s, peak while building %.0f MiB\n",
      p.faces.size(), p.nodes.size(), fixed, long(vf.F.nonZeros()), F_mib, build_s, peak_mib());
  reset_peak();
  const auto start = std::chrono::steady_clock::now();
  const ExchangeResult r = solve_exchange(p, ExchangeOptions{});
  const double solve_s = seconds_since(start);
  print_result(r.iterative ? "large" : "dense", r, solve_s);
  std::printf("  radiosity residual %.2e W/m^2, last linear relative residual %.2e\n",
              r.radiosity_residual, r.linear_residual);
  std::printf("solve %.2f s; peak memory during the solve %.0f MiB\n", solve_s, peak_mib());
  if (!r.message.empty()) std::printf("%s\n", r.message.c_str());
  return r.status == ExchangeStatus::converged ? 0 : 1;
}

}  // namespace

int main(int argc, char** argv) {
  if (argc > 1 && std::strcmp(argv[1], "--crossover") == 0) {
    return crossover(argc > 2 ? std::strtoul(argv[2], nullptr, 10) : 300);
  }
  if (argc > 1 && std::strcmp(argv[1], "--box") == 0) {
    if (argc < 7) {
      std::fprintf(stderr, "usage: %s --box Lx Ly Lz faces rays [furnace|tunnel [emissivity]]\n",
                   argv[0]);
      return 2;
    }
    const auto start = std::chrono::steady_clock::now();
    const Box box(std::atof(argv[2]), std::atof(argv[3]), std::atof(argv[4]),
                  std::strtoul(argv[5], nullptr, 10));
    const ViewFactors vf = box_factors(box, std::strtoul(argv[6], nullptr, 10));
    const ExchangeProblem p = box_problem(box, vf, argc > 7 && std::strcmp(argv[7], "tunnel") == 0,
                                          argc > 8 ? std::atof(argv[8]) : 0.0);
    return solve_and_report(vf, p, seconds_since(start));
  }
  const std::size_t n = argc > 1 ? std::strtoul(argv[1], nullptr, 10) : 20000;
  const std::size_t per_row = argc > 2 ? std::strtoul(argv[2], nullptr, 10) : 300;
  const double fixed_fraction = argc > 3 ? std::atof(argv[3]) : 0.5;
  if (n < 4 || per_row < 2 || !(fixed_fraction > 0 && fixed_fraction <= 1)) {
    std::fprintf(stderr, "usage: %s [faces >= 4] [per_row >= 2] [fixed_fraction in (0, 1]]\n",
                 argv[0]);
    return 2;
  }
  const auto start = std::chrono::steady_clock::now();
  const ViewFactors vf = synthetic_factors(n, std::min(per_row, n / 2));
  const ExchangeProblem p = synthetic_problem(vf, fixed_fraction, 0);
  return solve_and_report(vf, p, seconds_since(start));
}
