// Gas zones and their direct exchange areas, by Monte Carlo on the Embree scene (the zone
// method: Hottel & Sarofim, Radiative Transfer, 1967, ch. 11; Modest, Radiative Heat
// Transfer, the zonal method chapter).
//
// The gas fills a closed enclosure whose surfaces face it with their fronts (openings are
// surfaces too, e.g. black at the surroundings' temperature). The enclosure's bounding box is
// cut into a grid of cells; a cell with no sampled point inside the gas is dropped, the others
// are the zones.
//
// For each gray gas g of absorption coefficient k_g (uniform in the enclosure) the direct
// exchange areas are, with rows the emitters (patches, then zones):
//   surface row p:  s_p s_q = A_p E[tau(L) 1{ray ends on q}],  s_p g_z = A_p E[absorbed in z]
//   zone row z:     g_z s_q = 4 k V_z E[...],                  g_z g_y = 4 k V_z E[...]
// where a surface ray leaves p from a point uniform on it in a cosine-weighted direction (the
// view-factor rays, same seed, same rays), and a zone ray leaves a point uniform in the zone in
// an isotropic direction. Each ray is walked through the grid cells between its origin and its
// Embree hit (3-D DDA, Amanatides & Woo, "A fast voxel traversal algorithm for ray tracing",
// Eurographics 1987) and scores its expected absorption in each cell, exp(-k s0) - exp(-k s1)
// for the cell's stretch [s0, s1], and exp(-k L) at the surface it ends on: the
// expected-value (path-length) estimator, with no sampled absorption points. Per ray the
// scores add up to one (they telescope), so each raw row sums to A_p or to 4 k V_z up to
// round-off: the closure of the zone method, sum_q g_z s_q + sum_y g_z g_y = 4 k V_z (a zone
// emits 4 k V sigma T^4 in all, and every bit of it is absorbed somewhere; Modest, zonal
// method), and sum_q s_p s_q + sum_z s_p g_z = A_p.
//
// Zone volumes: a zone ray's first hit tells whether its origin is in the gas (it lands on the
// front of a one-sided surface, or on a two-sided one) or not (the back of a one-sided surface,
// or nothing). V_z = V_cell x (rays from inside / rays), a Monte Carlo point-in-enclosure
// estimate with binomial standard error. The zone row is scored over all of its cell's rays
// (outside ones score zero), so it estimates 4 k V_z E[...] without a ratio. Scores that fall in
// a dropped cell (a sliver of gas no sampled point found) are given to the nearest kept zone.
//
// Random numbers: patch rays as the view factors (seed, patch, ray); zone rays from a stream
// keyed by (seed, cell, ray). Work is cut into chunks of one emitter's rays, each chunk sums
// its rays in order and chunks are merged in a fixed order: results are bitwise identical for
// any thread count.
#pragma once

#include <Eigen/Dense>
#include <array>
#include <cstdint>
#include <string>
#include <vector>

#include "hearthray/geometry.hpp"
#include "hearthray/patches.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/tracer.hpp"
#include "hearthray/view_factors.hpp"

namespace hearthray {

// A regular grid of cells over a box.
class ZoneGrid {
 public:
  ZoneGrid() = default;
  // Throws InputError for non-positive counts or an empty box.
  ZoneGrid(const Box3& box, std::array<int, 3> cells);

  std::size_t cell_count() const { return std::size_t(n_[0]) * n_[1] * n_[2]; }
  const std::array<int, 3>& cells() const { return n_; }
  const Box3& box() const { return box_; }
  Vec3 cell_size() const { return size_; }
  double cell_volume() const { return size_.x * size_.y * size_.z; }
  Box3 cell_box(std::size_t cell) const;
  std::array<int, 3> cell_index(std::size_t cell) const;

  // One stretch of a ray inside a cell: from the previous stretch's end (or 0) to `end`.
  struct Stretch {
    std::uint32_t cell;
    double end;
  };
  // Walks the ray o + t d, t in [0, t_max], through the cells (3-D DDA) and appends the
  // stretches to `out` (cleared first). Points outside the box count to the nearest cell, so
  // the stretches always cover [0, t_max].
  void walk(const Vec3& origin, const Vec3& direction, double t_max,
            std::vector<Stretch>* out) const;

 private:
  Box3 box_;
  std::array<int, 3> n_{1, 1, 1};
  Vec3 size_;
};

// Volume enclosed by the one-sided surfaces of a scene whose fronts face the gas (divergence
// theorem over the triangles; a solid load inside with outward fronts is subtracted), m^3.
double gas_volume_by_divergence(const Scene& scene);

// How the exchange areas are stored, and so which smoothing and solve they get: dense
// (patches + zones)^2 matrices per gray gas, smoothed and solved by dense linear algebra, or
// sparse rows (only the pairs some ray joined), smoothed and solved at a cost that grows with
// the non-zeros (zone_solve.hpp).
enum class GasStorage { automatic, dense, sparse };

struct GasTraceOptions {
  std::uint64_t rays_per_patch = 100000;      // surface rays per patch...
  std::vector<std::uint64_t> rays_for_patch;  // ...or one count per patch
  std::uint64_t rays_per_cell = 100000;       // zone rays per grid cell
  std::uint64_t seed = 1;
  int threads = 0;  // 0 = all cores
  // automatic: dense up to dense_row_limit rows (patches + grid cells), sparse above.
  GasStorage storage = GasStorage::automatic;
  std::size_t dense_row_limit = 2000;
  // Runs whose estimated memory (gas_exchange_memory) exceeds this are refused unless
  // forced; 0: the machine's physical memory.
  double memory_limit_bytes = 0;
  bool force = false;

  bool IsValid(std::string* error) const;
};

// Estimated peak memory of tracing, smoothing and solving the exchange areas, bytes, and the
// storage it assumes. Sparse: the non-zeros of a row of n rays are estimated as the patches
// n rays spread over would reach, P (1 - exp(-n / P)), plus the cells they cross (at most
// n (nx + ny + nz)); a furnace whose patches all see one another comes near that.
struct GasMemoryEstimate {
  GasStorage storage = GasStorage::dense;
  double non_zeros = 0;  // per gray gas
  double bytes = 0;
};
GasMemoryEstimate gas_exchange_memory(std::size_t patches, std::array<int, 3> cells,
                                      std::size_t gray_gases,
                                      const std::vector<std::uint64_t>& rays_per_row,
                                      const GasTraceOptions& options);

// Direct exchange areas for every gray gas, rows and columns: patches 0..P-1, zones P..P+Z-1.
struct GasExchange {
  ZoneGrid grid;
  std::size_t patch_count = 0;
  std::vector<double> areas;             // per patch, m^2
  std::vector<std::uint32_t> zone_cell;  // per zone: its grid cell
  std::vector<double> volume;            // per zone, m^3 (Monte Carlo)
  std::vector<double> volume_error;      // per zone: standard error, m^3
  std::vector<std::uint64_t> rays;       // per row: rays traced
  std::vector<double> k;                 // per gray gas: absorption coefficient, 1/m
  // Dense storage: per gray gas, exchange areas and the standard error of the raw ones, m^2.
  std::vector<Eigen::MatrixXd> S;
  std::vector<Eigen::MatrixXd> sigma;
  // Sparse storage (S and sigma empty): the same, row-major, only entries some ray scored
  // (smoothing adds the transposed pattern).
  std::vector<SparseMatrix> sparse_S;
  std::vector<SparseMatrix> sparse_sigma;
  // Per gray gas and row: exchange area of rays that escaped or ended on the back of a
  // one-sided surface (0 in a closed enclosure with fronts facing the gas), m^2.
  std::vector<Eigen::VectorXd> lost;
  bool smoothed = false;
  double max_correction_sigma = 0;  // largest smoothing change, in standard errors

  std::size_t zone_count() const { return volume.size(); }
  std::size_t rows() const { return patch_count + zone_count(); }
  std::size_t gas_count() const { return k.size(); }
  bool dense() const { return !S.empty(); }
  // S^g_ij and the row sum of S^g, whichever the storage.
  double entry(std::size_t g, std::size_t i, std::size_t j) const;
  double row_sum(std::size_t g, std::size_t i) const;
  // Stored entries of S (all of them when dense), summed over the gray gases.
  std::size_t non_zeros() const;
  // What a row should sum to: A_p for a patch, 4 k_g V_z for a zone.
  double row_target(std::size_t g, std::size_t row) const;
};

// The raw Monte Carlo scores of a trace, before zones are chosen: sums of the scores and of
// their squares per row (patches 0..P-1, then every grid cell) in sparse columns (ascending),
// `gases` values per entry, chunks merged in a fixed order (so they do not depend on the thread
// count). What the gas cache keeps (gas_cache.hpp): the exchange areas follow from them exactly.
struct GasScores {
  std::size_t gases = 0;
  std::vector<std::uint64_t> rays;    // per row
  std::vector<std::size_t> offset;    // per row, and one past the last: into column
  std::vector<std::uint32_t> column;  // patches, then grid cells
  std::vector<double> sum, sq;        // column.size() x gases
  std::vector<double> lost;           // rows x gases: escaped or back-side score
  std::vector<std::uint64_t> inside;  // per cell: its points that lay in the gas
  std::size_t rows() const { return rays.size(); }
};

// The scores of `k` (one entry per gray gas) through the grid `cells` over the scene's
// bounding box. Throws InputError for invalid options or a run whose estimated memory exceeds
// the limit (unless forced).
GasScores trace_gas_scores(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                           std::array<int, 3> cells, const std::vector<double>& k,
                           const GasTraceOptions& options);

// The zones and raw exchange areas from scores (stored as options.storage says).
GasExchange gas_exchange_from_scores(const Scene& scene, const PatchSet& patches,
                                     std::array<int, 3> cells, const std::vector<double>& k,
                                     const GasScores& scores, const GasTraceOptions& options);

// Both: traces the exchange areas of `k` through the zones of `cells` over the scene's
// bounding box. Throws InputError for invalid options or a run whose estimated
// memory exceeds the limit (unless forced).
GasExchange trace_gas_exchange(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                               std::array<int, 3> cells, const std::vector<double>& k,
                               const GasTraceOptions& options);

struct GasSmoothingSummary {
  bool converged = false;
  int iterations = 0;                // largest over the gray gases
  double max_row_error = 0;          // max |row sum - target| / target after smoothing
  double max_reciprocity_error = 0;  // max |S_ij - S_ji| / max S after smoothing
  // max |S - S_raw| / sigma over entries with sigma > 0, sigma at least 1e-9 of the row's
  // target (negligible entries do not count)
  double max_correction_sigma = 0;
};

// Reciprocity and closure: each pair's two estimates are pooled, weighted by each row's rays
// over its scale (A_i or 4 k V_cell), into a symmetric matrix, then scaled S = D S~ D (symmetric
// matrix balancing; Knight, "The Sinkhorn-Knopp algorithm: convergence and applications", SIAM J.
// Matrix Anal. Appl. 30, 2008, symmetric variant) so that every row sums to its target less its
// lost part. Zeros stay zero and nothing turns negative.
GasSmoothingSummary smooth_gas_exchange(GasExchange& exchange, double tolerance = 1e-13,
                                        int max_iterations = 10000);

}  // namespace hearthray
