// Monte Carlo direct exchange areas with gas zones (see gas_zones.hpp for the method).
#include <tbb/enumerable_thread_specific.h>
#include <tbb/info.h>
#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include "factors/emitter_sampling.hpp"
#include "factors/hit_counter.hpp"
#include "hearthray/error.hpp"
#include "hearthray/gas_zones.hpp"
#include "hearthray/sampling.hpp"

namespace hearthray {

bool GasTraceOptions::IsValid(std::string* error) const {
  auto fail = [&](const std::string& m) {
    if (error) *error = m;
    return false;
  };
  if (rays_per_patch == 0) return fail("rays_per_patch must be at least 1");
  if (rays_per_cell == 0) return fail("rays_per_cell must be at least 1");
  for (std::uint64_t n : rays_for_patch)
    if (n == 0) return fail("every patch needs at least 1 ray");
  if (threads < 0) return fail("threads must be 0 (all cores) or a positive count");
  return true;
}

double GasExchange::row_target(std::size_t g, std::size_t row) const {
  return row < patch_count ? areas[row] : 4 * k[g] * volume[row - patch_count];
}

namespace {

constexpr std::uint64_t kChunkRays = 8192;
constexpr std::size_t kBatch = 256;
// Zone rays draw from streams of their own, apart from the patches' (seed, patch) streams.
constexpr std::uint64_t kZoneStreamSalt = 0x5be0cd19137e2179ull;

struct Chunk {
  std::uint32_t row;  // patch p, or P + cell
  std::uint64_t first, last, total;
};

// Scores of one chunk: sparse columns with per-gas sums and sums of squares.
struct ChunkScores {
  std::vector<std::uint32_t> column;
  std::vector<double> sum, sum_sq;  // column.size() x gases
  std::vector<double> lost;         // per gas
  std::uint64_t inside = 0;         // zone rays whose origin is in the gas
};

struct Scratch {
  std::vector<Ray> rays;
  std::vector<RayHit> hits;
  std::vector<float> offset;
  std::vector<double> sum, sum_sq;  // columns x gases, dense
  std::vector<double> ray_score;    // columns x gases: the current ray's scores
  std::vector<std::uint32_t> touched, ray_touched;
  std::vector<ZoneGrid::Stretch> stretches;
  std::vector<double> tau;
};

class ChunkTracer {
 public:
  ChunkTracer(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
              const ZoneGrid& grid, const std::vector<double>& k, std::uint64_t seed)
      : patches_(patches),
        tracer_(tracer),
        grid_(grid),
        k_(k),
        seed_(seed),
        centre_(tracer.centre()),
        lookup_(scene, patches),
        emitters_(scene, patches, tracer.centre(), seed),
        columns_(patches.size() + grid.cell_count()) {}

  Scratch make_scratch() const {
    Scratch s;
    s.rays.resize(kBatch);
    s.hits.resize(kBatch);
    s.offset.resize(kBatch);
    s.sum.assign(columns_ * k_.size(), 0.0);
    s.sum_sq.assign(columns_ * k_.size(), 0.0);
    s.ray_score.assign(columns_ * k_.size(), 0.0);
    s.tau.resize(k_.size());
    return s;
  }

  ChunkScores run(const Chunk& chunk, Scratch& s) const {
    ChunkScores out;
    out.lost.assign(k_.size(), 0.0);
    if (chunk.row < patches_.size())
      surface_rays(chunk, s, out);
    else
      zone_rays(chunk, s, out);
    collect(s, out);
    return out;
  }

 private:
  void surface_rays(const Chunk& chunk, Scratch& s, ChunkScores& out) const {
    EmitterSampler::Cursor cursor = emitters_.start(chunk.row, chunk.total, chunk.first);
    for (std::uint64_t k0 = chunk.first; k0 < chunk.last; k0 += kBatch) {
      const std::size_t m = std::size_t(std::min<std::uint64_t>(kBatch, chunk.last - k0));
      emitters_.sample(cursor, k0, m, s.rays.data(), s.offset.data());
      tracer_.trace(s.rays.data(), s.hits.data(), m);
      for (std::size_t i = 0; i < m; ++i) {
        // A back-face hit within a few offsets of the origin is the plane of a neighbour
        // meeting the emitter at an edge, not an arrival: trace on past it (as the view
        // factors do).
        RayHit& h = s.hits[i];
        for (int retry = 0;
             retry < 3 && h.triangle != RayHit::kMiss && !h.front && h.t < 4 * s.offset[i];
             ++retry) {
          s.rays[i].tnear = h.t + s.offset[i];
          tracer_.trace(&s.rays[i], &h, 1);
        }
        score_ray(s.rays[i], h, s, out);
      }
    }
  }

  void zone_rays(const Chunk& chunk, Scratch& s, ChunkScores& out) const {
    const std::uint32_t cell = chunk.row - std::uint32_t(patches_.size());
    const Box3 box = grid_.cell_box(cell);
    const Vec3 e = box.extent();
    const std::uint64_t key = patch_stream_key(seed_ ^ kZoneStreamSalt, cell);
    const std::uint64_t key2 = mix64(key ^ kZoneStreamSalt);
    for (std::uint64_t k0 = chunk.first; k0 < chunk.last; k0 += kBatch) {
      const std::size_t m = std::size_t(std::min<std::uint64_t>(kBatch, chunk.last - k0));
      for (std::size_t i = 0; i < m; ++i) {
        const auto u = ray_uniforms(key, k0 + i);
        const double v = ray_uniforms(key2, k0 + i)[0];
        const Vec3 p{box.lo.x + u[0] * e.x, box.lo.y + u[1] * e.y, box.lo.z + u[2] * e.z};
        // Isotropic direction: cos(theta) uniform in [-1, 1], azimuth uniform.
        const double z = 1 - 2 * u[3];
        const double r = std::sqrt(std::max(0.0, 1 - z * z));
        double sn, cs;
        sincos_2pi(v, &sn, &cs);
        Ray& ray = s.rays[i];
        const Vec3 d{r * cs, r * sn, z};
        for (int a = 0; a < 3; ++a) {
          ray.org[a] = float(p[a] - centre_[a]);
          ray.dir[a] = float(d[a]);
        }
        ray.tnear = 0;
        ray.tfar = 3.0e38f;
      }
      tracer_.trace(s.rays.data(), s.hits.data(), m);
      for (std::size_t i = 0; i < m; ++i) {
        const RayHit& h = s.hits[i];
        // Inside the gas iff the first thing the ray meets faces the gas.
        if (h.triangle == RayHit::kMiss || lookup_.patch_of(h) == PatchSet::kNoPatch) continue;
        ++out.inside;
        score_ray(s.rays[i], h, s, out);
      }
    }
  }

  // Scores one ray: expected absorption in every cell it crosses and the transmitted rest at
  // the patch it ends on (or lost), for every gray gas. Accumulates sums and squares.
  void score_ray(const Ray& ray, const RayHit& h, Scratch& s, ChunkScores& out) const {
    const std::size_t G = k_.size();
    const Vec3 o{ray.org[0] + centre_.x, ray.org[1] + centre_.y, ray.org[2] + centre_.z};
    const Vec3 d{ray.dir[0], ray.dir[1], ray.dir[2]};
    const double len = norm(d);
    const Vec3 dn = d / len;
    const bool hit = h.triangle != RayHit::kMiss;
    const double t_end = hit ? double(h.t) * len : exit_distance(o, dn);
    grid_.walk(o, dn, t_end, &s.stretches);
    std::fill(s.tau.begin(), s.tau.end(), 1.0);
    const std::size_t P = patches_.size();
    for (const ZoneGrid::Stretch& st : s.stretches) {
      const std::size_t col = P + st.cell;
      bool any = false;
      for (std::size_t g = 0; g < G; ++g) {
        if (k_[g] == 0) continue;
        const double next = std::exp(-k_[g] * st.end);
        const double absorbed = s.tau[g] - next;
        s.tau[g] = next;
        s.ray_score[col * G + g] += absorbed;
        any = true;
      }
      if (any) s.ray_touched.push_back(std::uint32_t(col));
    }
    const std::uint32_t q = hit ? lookup_.patch_of(h) : PatchSet::kNoPatch;
    if (q == PatchSet::kNoPatch) {
      for (std::size_t g = 0; g < G; ++g) out.lost[g] += s.tau[g];
    } else {
      for (std::size_t g = 0; g < G; ++g) s.ray_score[std::size_t(q) * G + g] += s.tau[g];
      s.ray_touched.push_back(q);
    }
    // Fold the ray's scores into the chunk's sums (a cell crossed twice is one score).
    for (std::uint32_t col : s.ray_touched) {
      double* score = &s.ray_score[std::size_t(col) * G];
      bool first_touch = true;
      for (std::size_t g = 0; g < G; ++g) {
        if (s.sum[col * G + g] != 0 || s.sum_sq[col * G + g] != 0) first_touch = false;
      }
      bool nonzero = false;
      for (std::size_t g = 0; g < G; ++g) {
        if (score[g] == 0) continue;
        nonzero = true;
        s.sum[col * G + g] += score[g];
        s.sum_sq[col * G + g] += score[g] * score[g];
        score[g] = 0;
      }
      if (first_touch && nonzero) s.touched.push_back(col);
    }
    s.ray_touched.clear();
  }

  double exit_distance(const Vec3& o, const Vec3& d) const {
    const Box3& b = grid_.box();
    double t = std::numeric_limits<double>::infinity();
    for (int a = 0; a < 3; ++a) {
      if (d[a] > 0) t = std::min(t, (b.hi[a] - o[a]) / d[a]);
      if (d[a] < 0) t = std::min(t, (b.lo[a] - o[a]) / d[a]);
    }
    return std::max(t, 0.0);
  }

  void collect(Scratch& s, ChunkScores& out) const {
    const std::size_t G = k_.size();
    std::sort(s.touched.begin(), s.touched.end());
    out.column = s.touched;
    out.sum.reserve(s.touched.size() * G);
    out.sum_sq.reserve(s.touched.size() * G);
    for (std::uint32_t col : s.touched) {
      for (std::size_t g = 0; g < G; ++g) {
        out.sum.push_back(s.sum[col * G + g]);
        out.sum_sq.push_back(s.sum_sq[col * G + g]);
        s.sum[col * G + g] = 0;
        s.sum_sq[col * G + g] = 0;
      }
    }
    s.touched.clear();
  }

  const PatchSet& patches_;
  const Tracer& tracer_;
  const ZoneGrid& grid_;
  const std::vector<double>& k_;
  std::uint64_t seed_;
  Vec3 centre_;
  PatchLookup lookup_;
  EmitterSampler emitters_;
  std::size_t columns_;
};

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

// Raw per-cell sums of every chunk, merged in the chunks' fixed order (so the result does not
// depend on the thread count).
struct RawScores {
  std::vector<Eigen::MatrixXd> sum, sq;  // per gray gas: (P + C)^2 sums of scores and squares
  std::vector<Eigen::VectorXd> lost;     // per gray gas and row: escaped or back-side score
  std::vector<std::uint64_t> inside;     // per cell: its points that lay in the gas
};

void check_gas_trace_input(const PatchSet& patches, const std::vector<double>& k,
                           const GasTraceOptions& options) {
  std::string why;
  if (!options.IsValid(&why)) throw InputError("gas exchange: " + why);
  if (k.empty()) throw InputError("gas exchange: no gray gas given");
  for (double kg : k)
    if (!std::isfinite(kg) || kg < 0)
      throw InputError("gas exchange: absorption coefficients must be finite and >= 0");
  if (!options.rays_for_patch.empty() && options.rays_for_patch.size() != patches.size())
    throw InputError("gas exchange: rays_for_patch needs one count per patch");
}

template <class RaysOf>
RawScores trace_raw_scores(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                           const ZoneGrid& grid, const std::vector<double>& k,
                           const GasTraceOptions& options, const RaysOf& rays_of) {
  const std::size_t P = patches.size(), C = grid.cell_count(), N = P + C, G = k.size();
  std::vector<Chunk> chunks;
  for (std::size_t row = 0; row < N; ++row)
    for (std::uint64_t f = 0, n = rays_of(row); f < n; f += kChunkRays)
      chunks.push_back({std::uint32_t(row), f, std::min(n, f + kChunkRays), n});
  std::vector<ChunkScores> results(chunks.size());

  const ChunkTracer chunk_tracer(scene, patches, tracer, grid, k, options.seed);
  tbb::enumerable_thread_specific<Scratch> scratch([&] { return chunk_tracer.make_scratch(); });
  const int threads = options.threads > 0 ? options.threads : tbb::info::default_concurrency();
  tbb::task_arena arena(threads);
  arena.execute([&] {
    tbb::parallel_for(tbb::blocked_range<std::size_t>(0, chunks.size(), 1),
                      [&](const tbb::blocked_range<std::size_t>& range) {
                        for (std::size_t c = range.begin(); c != range.end(); ++c)
                          results[c] = chunk_tracer.run(chunks[c], scratch.local());
                      });
  });

  RawScores raw;
  raw.sum.assign(G, Eigen::MatrixXd::Zero(N, N));
  raw.sq = raw.sum;
  raw.lost.assign(G, Eigen::VectorXd::Zero(N));
  raw.inside.assign(C, 0);
  for (std::size_t c = 0; c < chunks.size(); ++c) {
    const ChunkScores& r = results[c];
    const std::size_t row = chunks[c].row;
    if (row >= P) raw.inside[row - P] += r.inside;
    for (std::size_t g = 0; g < G; ++g) raw.lost[g](row) += r.lost[g];
    for (std::size_t i = 0; i < r.column.size(); ++i)
      for (std::size_t g = 0; g < G; ++g) {
        raw.sum[g](row, r.column[i]) += r.sum[i * G + g];
        raw.sq[g](row, r.column[i]) += r.sum_sq[i * G + g];
      }
  }
  return raw;
}

// Zones are the cells with points in the gas; rows of dropped cells go, their columns move to
// the nearest zone. Scores become exchange areas (scale A_i or 4 k V_cell) with standard errors.
template <class RaysOf>
void assemble_zones(GasExchange& x, const RawScores& raw, const PatchSet& patches,
                    const RaysOf& rays_of) {
  const ZoneGrid& grid = x.grid;
  const std::size_t P = patches.size(), C = grid.cell_count(), N = P + C, G = x.k.size();
  std::vector<bool> kept(C);
  for (std::size_t c = 0; c < C; ++c) kept[c] = raw.inside[c] > 0;
  if (std::none_of(kept.begin(), kept.end(), [](bool b) { return b; }))
    throw InputError(
        "gas zones: no sampled point lies in the gas. The gas needs a closed enclosure whose "
        "surfaces face it with their fronts (normals pointing into the gas)");
  const std::vector<std::uint32_t> to = nearest_kept(grid, kept);
  std::vector<std::size_t> zone_of_cell(C, 0);
  for (std::size_t c = 0; c < C; ++c) {
    if (!kept[c]) continue;
    zone_of_cell[c] = x.zone_cell.size();
    x.zone_cell.push_back(std::uint32_t(c));
    const double p = double(raw.inside[c]) / double(rays_of(P + c));
    x.volume.push_back(grid.cell_volume() * p);
    x.volume_error.push_back(grid.cell_volume() * std::sqrt(p * (1 - p) / double(rays_of(P + c))));
  }
  const std::size_t Z = x.zone_cell.size(), R = P + Z;
  for (std::size_t p = 0; p < P; ++p) x.areas.push_back(patches.patches[p].area);
  std::vector<std::size_t> row_of(N), col_of(N);  // raw index -> final index
  for (std::size_t i = 0; i < N; ++i) {
    row_of[i] = i < P ? i : (kept[i - P] ? P + zone_of_cell[i - P] : R);
    col_of[i] = i < P ? i : P + zone_of_cell[to[i - P]];
  }
  for (std::size_t i = 0; i < N; ++i)
    if (row_of[i] < R) x.rays.push_back(rays_of(i));
  for (std::size_t g = 0; g < G; ++g) {
    Eigen::MatrixXd S = Eigen::MatrixXd::Zero(R, R), var = S;
    Eigen::VectorXd L = Eigen::VectorXd::Zero(R);
    for (std::size_t i = 0; i < N; ++i) {
      if (row_of[i] == R) continue;
      const double n = double(rays_of(i));
      const double scale = i < P ? patches.patches[i].area : 4 * x.k[g] * grid.cell_volume();
      L(row_of[i]) = scale * raw.lost[g](i) / n;
      for (std::size_t j = 0; j < N; ++j) {
        const double s = raw.sum[g](i, j);
        if (s == 0) continue;
        const double mean = s / n;
        S(row_of[i], col_of[j]) += scale * mean;
        var(row_of[i], col_of[j]) +=
            scale * scale * std::max(0.0, raw.sq[g](i, j) / n - mean * mean) / n;
      }
    }
    x.S.push_back(std::move(S));
    x.sigma.push_back(var.cwiseSqrt());
    x.lost.push_back(std::move(L));
  }
}

}  // namespace

GasExchange trace_gas_exchange(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                               std::array<int, 3> cells, const std::vector<double>& k,
                               const GasTraceOptions& options) {
  check_gas_trace_input(patches, k, options);
  const std::size_t P = patches.size();
  // The grid covers the enclosure's box; the walk counts points rounded outside it to the
  // nearest cell.
  const ZoneGrid grid(scene.bounds, cells);
  const std::size_t C = grid.cell_count(), N = P + C;
  if (N > options.max_rows)
    throw InputError("gas exchange: " + std::to_string(P) + " patches and " + std::to_string(C) +
                     " grid cells exceed the dense limit of " + std::to_string(options.max_rows) +
                     " rows; use fewer patches or cells");
  auto rays_of = [&](std::size_t row) -> std::uint64_t {
    if (row >= P) return options.rays_per_cell;
    return options.rays_for_patch.empty() ? options.rays_per_patch : options.rays_for_patch[row];
  };
  const RawScores raw = trace_raw_scores(scene, patches, tracer, grid, k, options, rays_of);
  GasExchange x;
  x.grid = grid;
  x.patch_count = P;
  x.k = k;
  assemble_zones(x, raw, patches, rays_of);
  return x;
}

}  // namespace hearthray
