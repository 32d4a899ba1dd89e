// From raw Monte Carlo scores to exchange areas (see gas_zones.hpp for the method), the
// storage-independent accessors of GasExchange, and the memory estimate of a gas run.
#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include "gas/gas_raw.hpp"
#include "hearthray/error.hpp"

namespace hearthray {

double GasExchange::entry(std::size_t g, std::size_t i, std::size_t j) const {
  if (dense()) return S[g](Eigen::Index(i), Eigen::Index(j));
  return sparse_S[g].coeff(Eigen::Index(i), Eigen::Index(j));
}

double GasExchange::row_sum(std::size_t g, std::size_t i) const {
  if (dense()) return S[g].row(Eigen::Index(i)).sum();
  double sum = 0;
  for (SparseMatrix::InnerIterator it(sparse_S[g], Eigen::Index(i)); it; ++it) sum += it.value();
  return sum;
}

std::size_t GasExchange::non_zeros() const {
  std::size_t n = 0;
  for (const Eigen::MatrixXd& m : S) n += std::size_t(m.size());
  for (const SparseMatrix& m : sparse_S) n += std::size_t(m.nonZeros());
  return n;
}

GasMemoryEstimate gas_exchange_memory(std::size_t patches, std::array<int, 3> cells,
                                      std::size_t gray_gases,
                                      const std::vector<std::uint64_t>& rays_per_row,
                                      const GasTraceOptions& options) {
  const double P = double(patches), G = double(gray_gases);
  const double C = double(cells[0]) * cells[1] * cells[2], N = P + C;
  GasMemoryEstimate e;
  e.storage = options.storage;
  if (e.storage == GasStorage::automatic)
    e.storage = N <= double(options.dense_row_limit) ? GasStorage::dense : GasStorage::sparse;
  const double crossed = double(cells[0]) + cells[1] + cells[2];
  for (std::uint64_t n : rays_per_row) {
    const double reach = P > 0 ? P * -std::expm1(-double(n) / P) : 0.0;
    e.non_zeros += std::min(N, reach + std::min(C, double(n) * crossed));
  }
  // Bytes per stored entry and gray gas: the raw sums while tracing (sum and square, 16, and
  // a column, 4), S and sigma (value and column, 12 each); per entry once: one gray gas's
  // smoothing at a time (its transpose and the pooled matrix on the union pattern, up to 3 x 12).
  e.bytes = e.non_zeros * (G * (20 + 24) + 36);
  if (e.storage == GasStorage::dense) {
    // S and sigma per gray gas, the smoothing's raw copy, pooled and scaled matrices, and the
    // solve's factored radiosity matrix per gray gas, 8 bytes a number.
    e.bytes += 8 * (N * N * (2 * G + 3) + G * P * P);
  }
  return e;
}

namespace gas_detail {
namespace {

// Nearest kept cell (by centre distance, lowest index on ties) for every cell.
std::vector<std::uint32_t> nearest_kept(const ZoneGrid& grid, const std::vector<bool>& kept) {
  const std::size_t C = grid.cell_count();
  std::vector<std::uint32_t> to(C);
  for (std::size_t c = 0; c < C; ++c) {
    if (kept[c]) {
      to[c] = std::uint32_t(c);
      continue;
    }
    const auto a = grid.cell_index(c);
    const Vec3 h = grid.cell_size();
    double best = std::numeric_limits<double>::infinity();
    for (std::size_t e = 0; e < C; ++e) {
      if (!kept[e]) continue;
      const auto b = grid.cell_index(e);
      const Vec3 dv{(a[0] - b[0]) * h.x, (a[1] - b[1]) * h.y, (a[2] - b[2]) * h.z};
      const double dist = dot(dv, dv);
      if (dist < best) best = dist, to[c] = std::uint32_t(e);
    }
  }
  return to;
}

// The zones: cells with a point in the gas, with their volumes; returns the zone of each
// kept cell.
std::vector<std::size_t> keep_zones(GasExchange& x, const GasScores& raw, std::size_t P) {
  const std::vector<std::uint64_t>& rays = raw.rays;
  const ZoneGrid& grid = x.grid;
  const std::size_t C = grid.cell_count();
  std::vector<std::size_t> zone_of_cell(C, 0);
  for (std::size_t c = 0; c < C; ++c) {
    if (raw.inside[c] == 0) continue;
    zone_of_cell[c] = x.zone_cell.size();
    x.zone_cell.push_back(std::uint32_t(c));
    const double p = double(raw.inside[c]) / double(rays[P + c]);
    x.volume.push_back(grid.cell_volume() * p);
    x.volume_error.push_back(grid.cell_volume() * std::sqrt(p * (1 - p) / double(rays[P + c])));
  }
  if (x.zone_cell.empty())
    throw InputError(
        "gas zones: no sampled point lies in the gas. The gas needs a closed enclosure whose "
        "surfaces face it with their fronts (normals pointing into the gas)");
  return zone_of_cell;
}

// One gray gas: S and sigma in sparse rows. Each final entry is summed over the raw columns
// that move to it in ascending raw order, exactly as a dense accumulation would.
void assemble_gas(GasExchange& x, const GasScores& raw, std::size_t g,
                  const std::vector<std::size_t>& row_of, const std::vector<std::size_t>& col_of,
                  SparseMatrix* S, SparseMatrix* sigma, Eigen::VectorXd* L) {
  const std::size_t P = x.patch_count, N = row_of.size(), R = x.rows(), G = raw.gases;
  *S = SparseMatrix(Eigen::Index(R), Eigen::Index(R));
  *sigma = SparseMatrix(Eigen::Index(R), Eigen::Index(R));
  S->reserve(Eigen::Index(raw.column.size()));
  sigma->reserve(Eigen::Index(raw.column.size()));
  *L = Eigen::VectorXd::Zero(Eigen::Index(R));
  std::vector<double> area(R, 0.0), var(R, 0.0);
  std::vector<char> seen(R, 0);
  std::vector<std::size_t> touched;
  for (std::size_t i = 0; i < N; ++i) {
    if (row_of[i] == R) continue;
    const double n = double(raw.rays[i]);
    const double scale = i < P ? x.areas[i] : 4 * x.k[g] * x.grid.cell_volume();
    (*L)(Eigen::Index(row_of[i])) = scale * raw.lost[i * G + g] / n;
    for (std::size_t e = raw.offset[i]; e < raw.offset[i + 1]; ++e) {
      const double s = raw.sum[e * G + g];
      if (s == 0) continue;
      const std::size_t col = col_of[raw.column[e]];
      const double mean = s / n;
      if (!seen[col]) seen[col] = 1, touched.push_back(col);
      area[col] += scale * mean;
      var[col] += scale * scale * std::max(0.0, raw.sq[e * G + g] / n - mean * mean) / n;
    }
    std::sort(touched.begin(), touched.end());
    S->startVec(Eigen::Index(row_of[i]));
    sigma->startVec(Eigen::Index(row_of[i]));
    for (std::size_t col : touched) {
      S->insertBack(Eigen::Index(row_of[i]), Eigen::Index(col)) = area[col];
      sigma->insertBack(Eigen::Index(row_of[i]), Eigen::Index(col)) = std::sqrt(var[col]);
      area[col] = var[col] = 0, seen[col] = 0;
    }
    touched.clear();
  }
  S->finalize();
  sigma->finalize();
}

}  // namespace

void assemble_zones(GasExchange& x, const GasScores& raw, const PatchSet& patches,
                    GasStorage storage) {
  const std::size_t P = patches.size(), C = x.grid.cell_count(), N = P + C, G = x.k.size();
  const std::vector<std::size_t> zone_of_cell = keep_zones(x, raw, P);
  std::vector<bool> kept(C);
  for (std::size_t c = 0; c < C; ++c) kept[c] = raw.inside[c] > 0;
  const std::vector<std::uint32_t> to = nearest_kept(x.grid, kept);
  const std::size_t R = P + x.zone_cell.size();
  for (std::size_t p = 0; p < P; ++p) x.areas.push_back(patches.patches[p].area);
  std::vector<std::size_t> row_of(N), col_of(N);  // raw index -> final index
  for (std::size_t i = 0; i < N; ++i) {
    row_of[i] = i < P ? i : (kept[i - P] ? P + zone_of_cell[i - P] : R);
    col_of[i] = i < P ? i : P + zone_of_cell[to[i - P]];
  }
  for (std::size_t i = 0; i < N; ++i)
    if (row_of[i] < R) x.rays.push_back(raw.rays[i]);
  const bool dense = storage == GasStorage::dense;
  // Eigen 3.4's SparseMatrix has no move operations: size the vectors first, fill in place.
  if (!dense) x.sparse_S.resize(G), x.sparse_sigma.resize(G);
  for (std::size_t g = 0; g < G; ++g) {
    SparseMatrix S, sigma;
    Eigen::VectorXd L;
    assemble_gas(x, raw, g, row_of, col_of, dense ? &S : &x.sparse_S[g],
                 dense ? &sigma : &x.sparse_sigma[g], &L);
    if (dense) {
      x.S.push_back(Eigen::MatrixXd(S));
      x.sigma.push_back(Eigen::MatrixXd(sigma));
    }
    x.lost.push_back(std::move(L));
  }
}

}  // namespace gas_detail
}  // namespace hearthray
