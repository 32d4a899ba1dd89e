#include "hearthray/view_factors.hpp"

#include <tbb/enumerable_thread_specific.h>
#include <tbb/info.h>
#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>
#include <tbb/task_group.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <functional>
#include <mutex>
#include <new>
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
  std::uint32_t replicate;  // a row split over chunks, sampler sobol: the chunk's replicate
  bool whole_row;           // every ray of the patch: the chunk's tally is the whole row
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

// Chunks in emitter order. A patch of at most kChunkRays rays is one chunk, traced whole by
// one thread; a larger one is split, and with the sobol sampler no chunk straddles two
// replicates.
std::vector<Chunk> plan_chunks(const ViewFactorOptions& options, std::uint32_t begin,
                               std::uint32_t end) {
  std::vector<Chunk> chunks;
  const bool sobol = options.sampler == EmissionSampler::sobol;
  const std::uint32_t replicates = sobol ? kSobolReplicates : 1;
  for (std::uint32_t p = begin; p < end; ++p) {
    const std::uint64_t N = rays_of(options, p);
    if (N <= kChunkRays) {
      chunks.push_back({p, 0, N, N, 0, true});
      continue;
    }
    for (std::uint32_t r = 0; r < replicates; ++r) {
      const std::uint64_t a = sobol ? replicate_first_ray(N, r) : 0;
      const std::uint64_t b = sobol ? replicate_first_ray(N, r + 1) : N;
      for (std::uint64_t k = a; k < b; k += kChunkRays)
        chunks.push_back({p, k, std::min<std::uint64_t>(b, k + kChunkRays), N, r, false});
    }
  }
  return chunks;
}

// The squared replicate estimate (c / M)^2 of c hits among M rays.
inline double replicate_square(std::uint64_t c, double m) {
  return (double(c) / m) * (double(c) / m);
}

// One thread's sums over the replicates of a whole row (sampler sobol): per receiver the hits
// and the squared replicate estimates, added in replicate order, as RowMerger adds them for a
// row split over chunks, so the row is the same either way. Each ray that reached a patch
// leaves a key patch * 8 + replicate; one radix sort of the row's keys (a thousand or so)
// groups them by receiver and, within it, by replicate, so no per-patch array is touched.
class ReplicateRow {
 public:
  static_assert(kSobolReplicates == 8, "keys hold the replicate in 3 bits");

  // Moves the counter's run, replicate r of `rays` rays, into the row.
  void add_replicate(HitCounter& counter, std::uint32_t r, std::uint64_t rays) {
    HitTally rest;
    counter.drain_arrivals([&](std::uint32_t q) { keys_.push_back(std::uint64_t{q} << 3 | r); },
                           &rest);
    rays_[r] = double(rays);
    if (rays == 0) return;
    const double m = double(rays);
    row_.escaped += rest.escaped;
    row_.back_face += rest.back_face;
    row_.escaped_square += replicate_square(rest.escaped, m);
    row_.back_face_square += replicate_square(rest.back_face, m);
  }

  // The row (receivers ascending) into `out`, whose vectors keep their capacity; the next
  // row starts from zero.
  void take(HitTally* out, std::size_t n_patches) {
    sort_keys(keys_, sort_scratch_, std::uint64_t{n_patches} << 3);
    out->patch.clear();
    out->count.clear();
    out->square.clear();
    const std::size_t n = keys_.size();
    for (std::size_t i = 0; i < n;) {
      const std::uint64_t q = keys_[i] >> 3;
      std::uint64_t count = 0;
      double square = 0;
      for (; i < n && keys_[i] >> 3 == q;) {  // the replicates reaching q, in order
        const std::uint64_t key = keys_[i];
        std::size_t j = i + 1;
        while (j < n && keys_[j] == key) ++j;
        square += replicate_square(j - i, rays_[key & 7]);
        count += j - i;
        i = j;
      }
      out->patch.push_back(std::uint32_t(q));
      out->count.push_back(count);
      out->square.push_back(square);
    }
    keys_.clear();
    out->escaped = row_.escaped;
    out->back_face = row_.back_face;
    out->escaped_square = row_.escaped_square;
    out->back_face_square = row_.back_face_square;
    row_ = HitTally{};
  }

 private:
  std::vector<std::uint64_t> keys_, sort_scratch_;
  double rays_[kSobolReplicates] = {};
  HitTally row_;  // escaped and back-face sums
};

// Per-thread scratch: the hit counter and one batch of rays.
struct Scratch {
  explicit Scratch(const PatchLookup& lookup)
      : counter(lookup), rays(kBatch), hits(kBatch), offset(kBatch) {}
  HitCounter counter;
  ReplicateRow row;  // sampler sobol
  std::vector<Ray> rays;
  std::vector<RayHit> hits;
  std::vector<float> offset;  // origin offset of each ray of the batch
  // Sampler sobol: the points of a run of rays in tracing order, and scratch to sort them.
  std::vector<EmitterSampler::SobolPoint> points, unsorted;
  std::vector<std::uint32_t> buckets;
  std::uint64_t retraced = 0;
};

// Traces one batch of rays already in s.rays and counts the hits.
void trace_batch(std::size_t m, const Tracer& tracer, Scratch& s) {
  tracer.trace(s.rays.data(), s.hits.data(), m);
  for (std::size_t i = 0; i < m; ++i) {
    s.retraced += s.hits[i].retraced;
    trace_past_edge_neighbour(tracer, s.offset[i], s.rays[i], s.hits[i]);
    s.counter.add(s.hits[i]);
  }
}

// Traces rays [first, last) of a patch emitting `total`, counting them in s.counter; with the
// sobol sampler they lie in one replicate.
void trace_rays(std::uint32_t patch, std::uint64_t total, std::uint64_t first, std::uint64_t last,
                const EmitterSampler& emitters, bool sobol, const Tracer& tracer, Scratch& s) {
  EmitterSampler::Cursor cursor = emitters.start(patch, total, first);
  if (sobol) {
    emitters.sobol_points(cursor, first, last, &s.points, &s.unsorted, &s.buckets);
    for (std::size_t i = 0; i < s.points.size(); i += kBatch) {
      const std::size_t m = std::min(kBatch, s.points.size() - i);
      emitters.sample_points(cursor, s.points.data() + i, m, s.rays.data(), s.offset.data());
      trace_batch(m, tracer, s);
    }
    return;
  }
  for (std::uint64_t k0 = first; k0 < last; k0 += kBatch) {
    const std::size_t m = std::size_t(std::min<std::uint64_t>(kBatch, last - k0));
    emitters.sample(cursor, k0, m, s.rays.data(), s.offset.data());
    trace_batch(m, tracer, s);
  }
}

// Traces a chunk; its tally goes to `out` (whose vectors keep their capacity from chunk to
// chunk: the tallies of a window of chunks are not allocated and freed again every window).
void trace_chunk(const Chunk& chunk, const EmitterSampler& emitters, bool sobol,
                 const Tracer& tracer, Scratch& s, HitTally* out) {
  if (!chunk.whole_row || !sobol) {
    trace_rays(chunk.patch, chunk.total, chunk.first, chunk.last, emitters, sobol, tracer, s);
    s.counter.take(out);
    return;
  }
  const std::uint64_t N = chunk.total;
  for (std::uint32_t r = 0; r < kSobolReplicates; ++r) {
    const std::uint64_t a = replicate_first_ray(N, r), b = replicate_first_ray(N, r + 1);
    trace_rays(chunk.patch, N, a, b, emitters, sobol, tracer, s);
    s.row.add_replicate(s.counter, r, b - a);
  }
  s.row.take(out, s.counter.patch_count());
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

// Sums one row's chunk tallies: counts per receiver and, for the sobol sampler, the sum
// over replicates of the squared replicate estimates (c_r / M_r)^2, added in replicate
// order. Integer counts and a fixed order of the double sums: the same in any thread order.
class RowMerger {
 public:
  RowMerger(std::size_t n_patches, bool squares)
      : squares_(squares),
        count_(n_patches, 0),
        replicate_(squares ? n_patches : 0, 0),
        square_(squares ? n_patches : 0, 0.0) {}

  void add_chunk(const HitTally& r) {
    escaped_ += r.escaped;
    back_ += r.back_face;
    rep_escaped_ += r.escaped;
    rep_back_ += r.back_face;
    for (std::size_t k = 0; k < r.patch.size(); ++k) {
      const std::uint32_t q = r.patch[k];
      if (count_[q] == 0) touched_.push_back(q);
      count_[q] += r.count[k];
      if (!squares_) continue;
      if (replicate_[q] == 0) rep_touched_.push_back(q);
      replicate_[q] += r.count[k];
    }
  }

  // End of a replicate of `rays` rays.
  void end_replicate(std::uint64_t rays) {
    if (!squares_ || rays == 0) return;
    const double m = static_cast<double>(rays);
    auto sq = [m](std::uint64_t c) { return replicate_square(c, m); };
    for (std::uint32_t q : rep_touched_) {
      square_[q] += sq(replicate_[q]);
      replicate_[q] = 0;
    }
    rep_touched_.clear();
    escaped_square_ += sq(rep_escaped_);
    back_square_ += sq(rep_back_);
    rep_escaped_ = rep_back_ = 0;
  }

  // A row traced whole by one thread (its tally from trace_chunk), appended as it is.
  void add_row(const HitTally& r, std::uint64_t rays, Tallies* t) const {
    t->hit_patch.insert(t->hit_patch.end(), r.patch.begin(), r.patch.end());
    t->hit_count.insert(t->hit_count.end(), r.count.begin(), r.count.end());
    if (squares_) t->hit_square.insert(t->hit_square.end(), r.square.begin(), r.square.end());
    t->hit_offset.push_back(t->hit_patch.size());
    t->rays.push_back(rays);
    t->escaped.push_back(r.escaped);
    t->back_face.push_back(r.back_face);
    if (squares_) t->escaped_square.push_back(r.escaped_square);
    if (squares_) t->back_face_square.push_back(r.back_face_square);
  }

  void end_row(std::uint64_t rays, Tallies* t) {
    std::sort(touched_.begin(), touched_.end());
    for (std::uint32_t q : touched_) {
      t->hit_patch.push_back(q);
      t->hit_count.push_back(count_[q]);
      count_[q] = 0;
      if (squares_) t->hit_square.push_back(square_[q]);
      if (squares_) square_[q] = 0;
    }
    touched_.clear();
    t->hit_offset.push_back(t->hit_patch.size());
    t->rays.push_back(rays);
    t->escaped.push_back(escaped_);
    t->back_face.push_back(back_);
    if (squares_) t->escaped_square.push_back(escaped_square_);
    if (squares_) t->back_face_square.push_back(back_square_);
    escaped_ = back_ = 0;
    escaped_square_ = back_square_ = 0;
  }

 private:
  bool squares_;
  std::vector<std::uint64_t> count_, replicate_;
  std::vector<double> square_;
  std::vector<std::uint32_t> touched_, rep_touched_;
  std::uint64_t escaped_ = 0, back_ = 0, rep_escaped_ = 0, rep_back_ = 0;
  double escaped_square_ = 0, back_square_ = 0;
};

// The merged rows' patch count, first row and the per-surface totals of every thread. Integer
// sums: the same in any order.
void finish_tallies(std::uint32_t begin, const PatchLookup& lookup,
                    const tbb::enumerable_thread_specific<Scratch>& scratch, Tallies* tallies) {
  const std::size_t n_surfaces = lookup.surface_count();
  tallies->patch_count = lookup.patch_count();
  tallies->emitter_begin = begin;
  tallies->back_face_hits_on_surface.assign(n_surfaces, 0);
  tallies->hits_on_surface.assign(n_surfaces, 0);
  for (const Scratch& s : scratch) {
    for (std::size_t i = 0; i < n_surfaces; ++i) {
      tallies->back_face_hits_on_surface[i] += s.counter.back_face_hits_on_surface()[i];
      tallies->hits_on_surface[i] += s.counter.hits_on_surface()[i];
    }
  }
}

// Appends the rows of the chunks [first, end) (whole rows, in chunk order, which is emitter
// order; chunk c's tally is results[c - first]) to `tallies`.
void merge_rows(const ViewFactorOptions& options, const std::vector<Chunk>& chunks,
                std::size_t first, std::size_t end, const std::vector<HitTally>& results,
                RowMerger& row, Tallies* tallies) {
  const bool sobol = options.sampler == EmissionSampler::sobol;
  std::size_t c = first;
  while (c < end) {
    const std::uint32_t p = chunks[c].patch;
    const std::uint64_t N = chunks[c].total;
    if (chunks[c].whole_row) {
      row.add_row(results[c - first], N, tallies);
      ++c;
      continue;
    }
    for (std::uint32_t r = 0; r < (sobol ? kSobolReplicates : 1); ++r) {
      for (; c < end && chunks[c].patch == p && chunks[c].replicate == r; ++c) {
        row.add_chunk(results[c - first]);
      }
      if (sobol) row.end_replicate(replicate_first_ray(N, r + 1) - replicate_first_ray(N, r));
    }
    row.end_row(N, tallies);
  }
}

// Reserves the tallies' per-entry arrays for as many entries as there can be: at most one per
// ray and one per receiver in a row. Only the pages written become memory, so a generous
// reservation costs nothing, and it spares the copies (and the kernel's clearing of fresh
// pages) of arrays that double as they grow; where the address space cannot be had the arrays
// grow as usual.
void reserve_entries(const ViewFactorOptions& options, std::uint32_t begin, std::uint32_t end,
                     std::size_t n_patches, Tallies* tallies) {
  std::uint64_t entries = 0;
  for (std::uint32_t p = begin; p < end; ++p)
    entries += std::min<std::uint64_t>(rays_of(options, p), n_patches);
  const bool sobol = options.sampler == EmissionSampler::sobol;
  try {
    tallies->hit_patch.reserve(entries);
    tallies->hit_count.reserve(entries);
    if (sobol) tallies->hit_square.reserve(entries);
  } catch (const std::bad_alloc&) {
  } catch (const std::length_error&) {
  }
  tallies->hit_offset.reserve(std::size_t(end - begin) + 1);
  tallies->rays.reserve(end - begin);
}

// The end of the window of chunks starting at `first`: about kWindowChunks chunks, ending at a
// row's end. Chunks are traced and merged window by window, so that the chunks' own tallies
// (12 to 20 bytes per receiver per chunk) never exist for the whole run at once: 2048 chunks
// of whole rows of 1000 rays hold about 40 MB; a window's tail, where one thread may wait for
// the other's last chunk, is a chunk's time (under a millisecond at 1000 rays).
constexpr std::size_t kWindowChunks = std::size_t{1} << 11;
std::size_t window_end(const std::vector<Chunk>& chunks, std::size_t first) {
  std::size_t end = std::min(chunks.size(), first + kWindowChunks);
  while (end < chunks.size() && chunks[end].patch == chunks[end - 1].patch) ++end;
  return end;
}

}  // namespace

Tallies trace_tallies(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                      const ViewFactorOptions& options, TraceStats* stats) {
  const auto [begin, end] = checked_emitters(patches, options);
  const EmitterSampler emitters(scene, patches, tracer.centre(), options.seed, options.sampler);
  const PatchLookup lookup(scene, patches);
  const std::vector<Chunk> chunks = plan_chunks(options, begin, end);
  const bool sobol = options.sampler == EmissionSampler::sobol;
  tbb::enumerable_thread_specific<Scratch> scratch([&] { return Scratch(lookup); });

  std::uint64_t rays_total = 0;
  for (std::uint32_t p = begin; p < end; ++p) rays_total += rays_of(options, p);
  ProgressReport progress(options.progress, rays_total);
  const int threads = options.threads > 0 ? options.threads : tbb::info::default_concurrency();
  tbb::task_arena arena(threads);
  Tallies tallies;
  reserve_entries(options, begin, end, lookup.patch_count(), &tallies);
  RowMerger row(lookup.patch_count(), sobol);
  // The chunks' tallies of two windows, reused window after window: while one window is
  // traced, the one before it is merged into the tallies beside it (one thread; the merges
  // still run one after another, in window order, so the tallies are the same in any thread
  // order), instead of every thread but one waiting for the merge.
  std::vector<HitTally> results[2];
  const std::vector<HitTally>* to_merge = nullptr;  // the window traced last, not yet merged
  std::size_t merge_first = 0, merge_last = 0;      // and its chunks
  auto merge = [&] {
    if (to_merge) merge_rows(options, chunks, merge_first, merge_last, *to_merge, row, &tallies);
  };
  for (std::size_t first = 0; first < chunks.size();) {
    const std::size_t last = window_end(chunks, first);
    std::vector<HitTally>& traced = results[to_merge == &results[0] ? 1 : 0];
    if (traced.size() < last - first) traced.resize(last - first);
    arena.execute([&] {
      tbb::task_group merging;
      merging.run(merge);
      tbb::parallel_for(tbb::blocked_range<std::size_t>(first, last, 1),
                        [&](const tbb::blocked_range<std::size_t>& range) {
                          for (std::size_t c = range.begin(); c != range.end(); ++c) {
                            trace_chunk(chunks[c], emitters, sobol, tracer, scratch.local(),
                                        &traced[c - first]);
                            progress.add(chunks[c].last - chunks[c].first);
                          }
                        });
      merging.wait();
    });
    to_merge = &traced;
    merge_first = first;
    merge_last = last;
    first = last;
  }
  merge();
  results[0] = results[1] = std::vector<HitTally>{};
  const double seconds = progress.seconds();
  finish_tallies(begin, lookup, scratch, &tallies);

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

void append_shard(Tallies* merged, const Tallies& s) {
  if (s.patch_count != merged->patch_count ||
      s.emitter_begin != merged->emitter_begin + merged->rows() ||
      s.hit_square.empty() != merged->hit_square.empty() ||
      s.escaped_square.empty() != merged->escaped_square.empty() ||
      s.hits_on_surface.size() != merged->hits_on_surface.size())
    throw std::invalid_argument(
        "merge_shards: shards must come from one scene and cover consecutive "
        "emitter ranges in order");
  const std::uint64_t base = merged->hit_patch.size();
  for (std::size_t r = 0; r < s.rows(); ++r)
    merged->hit_offset.push_back(base + s.hit_offset[r + 1]);
  auto append = [](auto& to, const auto& from) { to.insert(to.end(), from.begin(), from.end()); };
  append(merged->hit_patch, s.hit_patch);
  append(merged->hit_count, s.hit_count);
  append(merged->rays, s.rays);
  append(merged->escaped, s.escaped);
  append(merged->back_face, s.back_face);
  append(merged->hit_square, s.hit_square);
  append(merged->escaped_square, s.escaped_square);
  append(merged->back_face_square, s.back_face_square);
  for (std::size_t i = 0; i < s.hits_on_surface.size(); ++i) {
    merged->hits_on_surface[i] += s.hits_on_surface[i];
    merged->back_face_hits_on_surface[i] += s.back_face_hits_on_surface[i];
  }
}

Tallies merge_shards(const std::vector<Tallies>& shards) {
  if (shards.empty()) throw std::invalid_argument("merge_shards: no shards given");
  Tallies merged = shards.front();
  for (std::size_t k = 1; k < shards.size(); ++k) append_shard(&merged, shards[k]);
  return merged;
}

}  // namespace hearthray
