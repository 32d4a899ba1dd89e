// Monte Carlo direct exchange areas with gas zones (see gas_zones.hpp for the method).
#include <tbb/enumerable_thread_specific.h>
#include <tbb/info.h>
#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>
#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include "core/text.hpp"
#include "factors/emitter_sampling.hpp"
#include "factors/hit_counter.hpp"
#include "gas/gas_raw.hpp"
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
  if (!std::isfinite(memory_limit_bytes) || memory_limit_bytes < 0)
    return fail("memory_limit_bytes must be finite and >= 0");
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

// Every chunk's scores, merged row by row in the chunks' fixed order (so the sums do not depend
// on the thread count); each chunk's scores are freed once merged.
GasScores merge_chunks(const std::vector<Chunk>& chunks, std::vector<ChunkScores>& results,
                       std::size_t P, std::size_t N, std::size_t G) {
  GasScores raw;
  raw.gases = G;
  raw.offset.push_back(0);
  raw.lost.assign(N * G, 0.0);
  raw.inside.assign(N - P, 0);
  std::vector<double> sum(N * G, 0.0), sq(N * G, 0.0);
  std::vector<char> seen(N, 0);
  std::vector<std::uint32_t> touched;
  std::size_t c = 0;
  for (std::size_t row = 0; row < N; ++row) {
    for (; c < chunks.size() && chunks[c].row == row; ++c) {
      ChunkScores& r = results[c];
      if (row >= P) raw.inside[row - P] += r.inside;
      for (std::size_t g = 0; g < G; ++g) raw.lost[row * G + g] += r.lost[g];
      for (std::size_t i = 0; i < r.column.size(); ++i) {
        const std::uint32_t col = r.column[i];
        if (!seen[col]) seen[col] = 1, touched.push_back(col);
        for (std::size_t g = 0; g < G; ++g) {
          sum[col * G + g] += r.sum[i * G + g];
          sq[col * G + g] += r.sum_sq[i * G + g];
        }
      }
      r = ChunkScores{};
    }
    std::sort(touched.begin(), touched.end());
    for (std::uint32_t col : touched) {
      raw.column.push_back(col);
      for (std::size_t g = 0; g < G; ++g) {
        raw.sum.push_back(sum[col * G + g]);
        raw.sq.push_back(sq[col * G + g]);
        sum[col * G + g] = sq[col * G + g] = 0;
      }
      seen[col] = 0;
    }
    touched.clear();
    raw.offset.push_back(raw.column.size());
  }
  return raw;
}

GasScores trace_raw_scores(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                           const ZoneGrid& grid, const std::vector<double>& k,
                           const GasTraceOptions& options, const std::vector<std::uint64_t>& rays) {
  const std::size_t P = patches.size(), C = grid.cell_count(), N = P + C, G = k.size();
  std::vector<Chunk> chunks;
  for (std::size_t row = 0; row < N; ++row)
    for (std::uint64_t f = 0, n = rays[row]; f < n; f += kChunkRays)
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
  return merge_chunks(chunks, results, P, N, G);
}

double physical_memory_bytes() {
  const long pages = ::sysconf(_SC_PHYS_PAGES), size = ::sysconf(_SC_PAGE_SIZE);
  return pages > 0 && size > 0 ? double(pages) * double(size) : 0.0;
}

std::string gigabytes(double bytes) {
  return rounded("%.3g", bytes / 1e9) + " GB";
}

// Refuses a run whose estimated memory exceeds the limit, unless forced.
void check_memory(std::size_t P, std::size_t C, std::size_t G, const GasMemoryEstimate& e,
                  const GasTraceOptions& options) {
  const double limit =
      options.memory_limit_bytes > 0 ? options.memory_limit_bytes : physical_memory_bytes();
  if (options.force || !(limit > 0) || e.bytes <= limit) return;
  throw InputError(
      "gas exchange: " + std::to_string(P) + " patches, " + std::to_string(C) + " grid cells and " +
      std::to_string(G) + " gray gases would need about " + gigabytes(e.bytes) + " of memory (" +
      (e.storage == GasStorage::dense
           ? std::string("dense matrices")
           : "about " + rounded("%.3g", e.non_zeros) + " exchange areas per gray gas") +
      "), more than the " + gigabytes(limit) +
      " available. Use larger patches, fewer cells or fewer rays, or give --force to run it "
      "anyway");
}

}  // namespace

GasScores trace_gas_scores(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                           std::array<int, 3> cells, const std::vector<double>& k,
                           const GasTraceOptions& options) {
  check_gas_trace_input(patches, k, options);
  const std::size_t P = patches.size();
  // The grid covers the enclosure's box; the walk counts points rounded outside it to the
  // nearest cell.
  const ZoneGrid grid(scene.bounds, cells);
  const std::size_t C = grid.cell_count(), N = P + C;
  std::vector<std::uint64_t> rays(N, options.rays_per_cell);
  for (std::size_t p = 0; p < P; ++p)
    rays[p] = options.rays_for_patch.empty() ? options.rays_per_patch : options.rays_for_patch[p];
  const GasMemoryEstimate memory = gas_exchange_memory(P, cells, k.size(), rays, options);
  check_memory(P, C, k.size(), memory, options);
  GasScores scores = trace_raw_scores(scene, patches, tracer, grid, k, options, rays);
  scores.rays = std::move(rays);
  return scores;
}

GasExchange gas_exchange_from_scores(const Scene& scene, const PatchSet& patches,
                                     std::array<int, 3> cells, const std::vector<double>& k,
                                     const GasScores& scores, const GasTraceOptions& options) {
  const ZoneGrid grid(scene.bounds, cells);
  if (scores.rows() != patches.size() + grid.cell_count() || scores.gases != k.size())
    throw InputError("gas exchange: the scores do not fit the patches, cells and gray gases");
  // Scores from the cache skipped the tracing's check: the smoothing and solve still need it.
  const GasMemoryEstimate memory =
      gas_exchange_memory(patches.size(), cells, k.size(), scores.rays, options);
  check_memory(patches.size(), grid.cell_count(), k.size(), memory, options);
  GasExchange x;
  x.grid = grid;
  x.patch_count = patches.size();
  x.k = k;
  gas_detail::assemble_zones(x, scores, patches, memory.storage);
  return x;
}

GasExchange trace_gas_exchange(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                               std::array<int, 3> cells, const std::vector<double>& k,
                               const GasTraceOptions& options) {
  const GasScores scores = trace_gas_scores(scene, patches, tracer, cells, k, options);
  return gas_exchange_from_scores(scene, patches, cells, k, scores, options);
}

}  // namespace hearthray
