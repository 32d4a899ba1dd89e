#include "hearthray/view_factors.hpp"

#include <tbb/enumerable_thread_specific.h>
#include <tbb/info.h>
#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <functional>
#include <mutex>
#include <stdexcept>

#include "factors/emitter_sampling.hpp"
#include "factors/hit_counter.hpp"
#include "hearthray/error.hpp"

namespace hearthray {

// Declared in emitter_sampling.hpp.
void trace_past_edge_neighbour(const Tracer& tracer, float offset, Ray& ray, RayHit& hit) {
  for (int retry = 0;
       retry < 3 && hit.triangle != RayHit::kMiss && !hit.front && hit.t < 4 * offset; ++retry) {
    ray.tnear = hit.t + offset;
    tracer.trace(&ray, &hit, 1);
  }
}

bool ViewFactorOptions::IsValid(std::string* error) const {
  auto fail = [&](const std::string& m) {
    if (error) *error = m;
    return false;
  };
  if (rays_per_patch == 0) return fail("rays_per_patch must be at least 1");
  if (threads < 0) return fail("threads must be 0 (all cores) or a positive count");
  if (emitter_end != 0 && emitter_end < emitter_begin)
    return fail("emitter_end must not be below emitter_begin");
  for (std::uint64_t n : rays_for_patch)
    if (n == 0) return fail("every patch needs at least 1 ray");
  return true;
}

namespace {

// A piece of work: rays [first, last) of one emitting patch, which emits `total` in all.
struct Chunk {
  std::uint32_t patch;
  std::uint64_t first, last, total;
};

constexpr std::uint64_t kChunkRays = 16384;
constexpr std::size_t kBatch = 256;

// The emitter range of the options, checked against the patches. Options come from the
// caller's code, not from the user's input: a wrong one is a programming mistake.
std::pair<std::uint32_t, std::uint32_t> checked_emitters(const PatchSet& patches,
                                                         const ViewFactorOptions& options) {
  std::string why;
  if (!options.IsValid(&why)) throw std::invalid_argument("view factors: " + why);
  const auto n_patches = static_cast<std::uint32_t>(patches.size());
  if (!options.rays_for_patch.empty() && options.rays_for_patch.size() != n_patches)
    throw std::invalid_argument("view factors: rays_for_patch has " +
                                std::to_string(options.rays_for_patch.size()) + " entries for " +
                                std::to_string(n_patches) + " patches");
  const std::uint32_t begin = options.emitter_begin;
  const std::uint32_t end = options.emitter_end == 0 ? n_patches : options.emitter_end;
  if (end > n_patches || begin > end)
    throw std::invalid_argument("view factors: emitter range [" + std::to_string(begin) + ", " +
                                std::to_string(end) + ") is outside the " +
                                std::to_string(n_patches) + " patches");
  return {begin, end};
}

std::uint64_t rays_of(const ViewFactorOptions& options, std::uint32_t patch) {
  return options.rays_for_patch.empty() ? options.rays_per_patch : options.rays_for_patch[patch];
}

std::vector<Chunk> plan_chunks(const ViewFactorOptions& options, std::uint32_t begin,
                               std::uint32_t end) {
  std::vector<Chunk> chunks;
  for (std::uint32_t p = begin; p < end; ++p)
    for (std::uint64_t k = 0, N = rays_of(options, p); k < N; k += kChunkRays)
      chunks.push_back({p, k, std::min<std::uint64_t>(N, k + kChunkRays), N});
  return chunks;
}

// Per-thread scratch: the hit counter and one batch of rays.
struct Scratch {
  explicit Scratch(const PatchLookup& lookup)
      : counter(lookup), rays(kBatch), hits(kBatch), offset(kBatch) {}
  HitCounter counter;
  std::vector<Ray> rays;
  std::vector<RayHit> hits;
  std::vector<float> offset;  // origin offset of each ray of the batch
  std::uint64_t retraced = 0;
};

HitTally trace_chunk(const Chunk& chunk, const EmitterSampler& emitters, const Tracer& tracer,
                     Scratch& s) {
  EmitterSampler::Cursor cursor = emitters.start(chunk.patch, chunk.total, chunk.first);
  for (std::uint64_t k0 = chunk.first; k0 < chunk.last; k0 += kBatch) {
    const std::size_t m = std::size_t(std::min<std::uint64_t>(kBatch, chunk.last - k0));
    emitters.sample(cursor, k0, m, s.rays.data(), s.offset.data());
    tracer.trace(s.rays.data(), s.hits.data(), m);
    for (std::size_t i = 0; i < m; ++i) {
      s.retraced += s.hits[i].retraced;
      trace_past_edge_neighbour(tracer, s.offset[i], s.rays[i], s.hits[i]);
      s.counter.add(s.hits[i]);
    }
  }
  return s.counter.take();
}

// Calls the progress callback from worker threads at most every 0.25 s, and at the end.
class ProgressReport {
 public:
  ProgressReport(const std::function<void(const TraceProgress&)>& callback, std::uint64_t total)
      : callback_(callback), total_(total), start_(std::chrono::steady_clock::now()) {}

  void add(std::uint64_t rays) {
    const std::uint64_t done = done_ += rays;
    if (!callback_) return;
    std::unique_lock<std::mutex> lock(mutex_, std::try_to_lock);
    if (!lock.owns_lock()) return;
    const double now = seconds();
    if (now - last_ >= 0.25 || done == total_) {
      last_ = now;
      callback_({done, total_, now});
    }
  }
  double seconds() const {
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - start_).count();
  }

 private:
  const std::function<void(const TraceProgress&)>& callback_;
  const std::uint64_t total_;
  const std::chrono::steady_clock::time_point start_;
  std::atomic<std::uint64_t> done_{0};
  std::mutex mutex_;
  double last_ = 0;
};

// Rows [begin, end) from the chunk tallies (in chunk order, which is emitter order), and the
// per-surface totals of every thread. Integer sums: the same in any order.
Tallies merge_rows(const ViewFactorOptions& options, std::uint32_t begin, std::uint32_t end,
                   const PatchLookup& lookup, const std::vector<Chunk>& chunks,
                   std::vector<HitTally>& results,
                   const tbb::enumerable_thread_specific<Scratch>& scratch) {
  Tallies tallies;
  const std::size_t n_patches = lookup.patch_count(), n_surfaces = lookup.surface_count();
  tallies.patch_count = n_patches;
  tallies.emitter_begin = begin;
  tallies.back_face_hits_on_surface.assign(n_surfaces, 0);
  tallies.hits_on_surface.assign(n_surfaces, 0);
  for (const Scratch& s : scratch) {
    for (std::size_t i = 0; i < n_surfaces; ++i) {
      tallies.back_face_hits_on_surface[i] += s.counter.back_face_hits_on_surface()[i];
      tallies.hits_on_surface[i] += s.counter.hits_on_surface()[i];
    }
  }
  std::vector<std::uint64_t> row_count(n_patches, 0);
  std::vector<std::uint32_t> touched;
  std::size_t c = 0;
  for (std::uint32_t p = begin; p < end; ++p) {
    std::uint64_t escaped = 0, back = 0;
    for (; c < chunks.size() && chunks[c].patch == p; ++c) {
      const HitTally& r = results[c];
      escaped += r.escaped;
      back += r.back_face;
      for (std::size_t k = 0; k < r.patch.size(); ++k) {
        if (row_count[r.patch[k]] == 0) touched.push_back(r.patch[k]);
        row_count[r.patch[k]] += r.count[k];
      }
      results[c] = HitTally{};
    }
    std::sort(touched.begin(), touched.end());
    for (std::uint32_t q : touched) {
      tallies.hit_patch.push_back(q);
      tallies.hit_count.push_back(row_count[q]);
      row_count[q] = 0;
    }
    touched.clear();
    tallies.hit_offset.push_back(tallies.hit_patch.size());
    tallies.rays.push_back(rays_of(options, p));
    tallies.escaped.push_back(escaped);
    tallies.back_face.push_back(back);
  }
  return tallies;
}

}  // namespace

Tallies trace_tallies(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                      const ViewFactorOptions& options, TraceStats* stats) {
  const auto [begin, end] = checked_emitters(patches, options);
  const EmitterSampler emitters(scene, patches, tracer.centre(), options.seed);
  const PatchLookup lookup(scene, patches);
  const std::vector<Chunk> chunks = plan_chunks(options, begin, end);
  std::vector<HitTally> results(chunks.size());
  tbb::enumerable_thread_specific<Scratch> scratch([&] { return Scratch(lookup); });

  std::uint64_t rays_total = 0;
  for (std::uint32_t p = begin; p < end; ++p) rays_total += rays_of(options, p);
  ProgressReport progress(options.progress, rays_total);
  const int threads = options.threads > 0 ? options.threads : tbb::info::default_concurrency();
  tbb::task_arena arena(threads);
  arena.execute([&] {
    tbb::parallel_for(tbb::blocked_range<std::size_t>(0, chunks.size(), 1),
                      [&](const tbb::blocked_range<std::size_t>& range) {
                        for (std::size_t c = range.begin(); c != range.end(); ++c) {
                          results[c] = trace_chunk(chunks[c], emitters, tracer, scratch.local());
                          progress.add(chunks[c].last - chunks[c].first);
                        }
                      });
  });
  const double seconds = progress.seconds();

  Tallies tallies = merge_rows(options, begin, end, lookup, chunks, results, scratch);
  if (stats) {
    stats->rays = rays_total;
    stats->retraced = 0;
    for (const Scratch& s : scratch) stats->retraced += s.retraced;
    stats->seconds = seconds;
    stats->rays_per_second = seconds > 0 ? double(rays_total) / seconds : 0;
    stats->threads = threads;
  }
  return tallies;
}

Tallies merge_shards(const std::vector<Tallies>& shards) {
  if (shards.empty()) throw std::invalid_argument("merge_shards: no shards given");
  Tallies merged;
  merged.patch_count = shards.front().patch_count;
  merged.emitter_begin = shards.front().emitter_begin;
  merged.back_face_hits_on_surface.assign(shards.front().back_face_hits_on_surface.size(), 0);
  merged.hits_on_surface.assign(shards.front().hits_on_surface.size(), 0);
  std::uint32_t next = merged.emitter_begin;
  for (const Tallies& s : shards) {
    if (s.patch_count != merged.patch_count || s.emitter_begin != next ||
        s.hits_on_surface.size() != merged.hits_on_surface.size())
      throw std::invalid_argument(
          "merge_shards: shards must come from one scene and cover consecutive "
          "emitter ranges in order");
    const std::uint64_t base = merged.hit_patch.size();
    for (std::size_t r = 0; r < s.rows(); ++r)
      merged.hit_offset.push_back(base + s.hit_offset[r + 1]);
    merged.hit_patch.insert(merged.hit_patch.end(), s.hit_patch.begin(), s.hit_patch.end());
    merged.hit_count.insert(merged.hit_count.end(), s.hit_count.begin(), s.hit_count.end());
    merged.rays.insert(merged.rays.end(), s.rays.begin(), s.rays.end());
    merged.escaped.insert(merged.escaped.end(), s.escaped.begin(), s.escaped.end());
    merged.back_face.insert(merged.back_face.end(), s.back_face.begin(), s.back_face.end());
    for (std::size_t i = 0; i < s.hits_on_surface.size(); ++i) {
      merged.hits_on_surface[i] += s.hits_on_surface[i];
      merged.back_face_hits_on_surface[i] += s.back_face_hits_on_surface[i];
    }
    next += static_cast<std::uint32_t>(s.rows());
  }
  return merged;
}

}  // namespace hearthray
