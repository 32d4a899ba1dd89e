#include "hearthray/view_factors.hpp"

#include <tbb/enumerable_thread_specific.h>
#include <tbb/info.h>
#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <mutex>

#include "hearthray/error.hpp"
#include "hearthray/sampling.hpp"

namespace hearthray {

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

// Everything the sampler needs of a triangle, in float as the rays are.
struct TriangleFrame {
  float v0[3], e1[3], e2[3];
  float n[3], t[3], b[3];  // right-handed frame, n the front normal
  float offset;            // origin offset along the normal against self-hits
};

// Offset of ray origins from the surface, relative to the size of the coordinates (not to
// an absolute length), so self-hits are avoided the same way at any scale: float rounding of
// the sampled point and of Embree's hit distance is ~1e-7 of the coordinates, and the offset
// 2^-16 ~ 1.5e-5 of them leaves a margin of about 100. Coordinates are taken in the tracer's
// frame (centred on the scene), so the offset follows the scene's size, not its position.
constexpr double kRelativeOffset = 1.0 / 65536.0;

std::vector<TriangleFrame> make_frames(const Scene& scene, const Vec3& centre) {
  std::vector<TriangleFrame> frames(scene.triangles.size());
  const double floor = scene.bounds.diagonal() / 1024;  // only guards against a zero offset
  for (std::size_t i = 0; i < scene.triangles.size(); ++i) {
    const Triangle& tri = scene.triangles[i];
    const Vec3 a = scene.vertices[tri.v[0]] - centre;
    const Vec3 b = scene.vertices[tri.v[1]] - centre;
    const Vec3 c = scene.vertices[tri.v[2]] - centre;
    const Vec3 n = normalized(cross(b - a, c - a));
    Vec3 t, bt;
    orthonormal_basis(n, &t, &bt);
    double scale = floor;
    for (const Vec3* p : {&a, &b, &c})
      scale = std::max({scale, std::fabs(p->x), std::fabs(p->y), std::fabs(p->z)});
    TriangleFrame& f = frames[i];
    const Vec3 e1 = b - a, e2 = c - a;
    for (int k = 0; k < 3; ++k) {
      f.v0[k] = float(a[k]);
      f.e1[k] = float(e1[k]);
      f.e2[k] = float(e2[k]);
      f.n[k] = float(n[k]);
      f.t[k] = float(t[k]);
      f.b[k] = float(bt[k]);
    }
    f.offset = float(kRelativeOffset * scale);
  }
  return frames;
}

// A piece of work: rays [first, last) of one emitting patch.
struct Chunk {
  std::uint32_t patch;
  std::uint64_t first, last;
};

struct ChunkResult {
  std::vector<std::pair<std::uint32_t, std::uint64_t>> hits;  // receiver, count; ascending
  std::uint64_t escaped = 0;
  std::uint64_t back_face = 0;
};

// Per-thread scratch: dense counters with a list of the touched entries, so that collecting
// a chunk's hits costs O(touched), not O(patches).
struct Scratch {
  std::vector<std::uint64_t> count;
  std::vector<std::uint32_t> touched;
  std::vector<std::uint64_t> back_on_surface, hits_on_surface;
  std::vector<Ray> rays;
  std::vector<RayHit> hits;
  std::vector<float> offset;  // origin offset of each ray of the batch
  std::uint64_t retraced = 0;
};

constexpr std::uint64_t kChunkRays = 16384;
constexpr std::size_t kBatch = 256;

}  // namespace

Tallies trace_tallies(const Scene& scene, const PatchSet& patches, const Tracer& tracer,
                      const ViewFactorOptions& options, TraceStats* stats) {
  std::string why;
  if (!options.IsValid(&why)) throw InputError("view factors: " + why);
  const auto n_patches = static_cast<std::uint32_t>(patches.size());
  if (!options.rays_for_patch.empty() && options.rays_for_patch.size() != n_patches)
    throw InputError("view factors: rays_for_patch has " +
                     std::to_string(options.rays_for_patch.size()) + " entries for " +
                     std::to_string(n_patches) + " patches");
  const std::uint32_t begin = options.emitter_begin;
  const std::uint32_t end = options.emitter_end == 0 ? n_patches : options.emitter_end;
  if (end > n_patches || begin > end)
    throw InputError("view factors: emitter range [" + std::to_string(begin) + ", " +
                     std::to_string(end) + ") is outside the " + std::to_string(n_patches) +
                     " patches");

  const std::vector<TriangleFrame> frames = make_frames(scene, tracer.centre());
  // Cumulative area along each patch's triangle list, for area-stratified origins.
  std::vector<double> cumulative(patches.triangle_index.size());
  std::vector<double> inverse_area(patches.triangle_index.size());
  for (std::uint32_t p = 0; p < n_patches; ++p) {
    double sum = 0;
    for (std::uint32_t k = patches.triangle_offset[p]; k < patches.triangle_offset[p + 1]; ++k) {
      const double area = scene.triangle_area(patches.triangle_index[k]);
      sum += area;
      cumulative[k] = sum;
      inverse_area[k] = 1.0 / area;
    }
  }

  auto rays_of = [&](std::uint32_t p) {
    return options.rays_for_patch.empty() ? options.rays_per_patch : options.rays_for_patch[p];
  };
  std::vector<Chunk> chunks;
  for (std::uint32_t p = begin; p < end; ++p)
    for (std::uint64_t k = 0, N = rays_of(p); k < N; k += kChunkRays)
      chunks.push_back({p, k, std::min<std::uint64_t>(N, k + kChunkRays)});
  std::vector<ChunkResult> results(chunks.size());

  // The patch a hit lands in. Where a surface side is one patch (the usual case) the
  // surface, which the tracer reports without a memory lookup, settles it; otherwise the
  // triangle does.
  constexpr std::uint32_t kByTriangle = 0xfffffffeu;
  std::vector<std::uint32_t> surface_front(scene.surfaces.size()),
      surface_back(scene.surfaces.size());
  for (std::uint32_t s = 0; s < scene.surfaces.size(); ++s) {
    const Surface& surface = scene.surfaces[s];
    const std::uint32_t t0 = surface.first_triangle, t1 = t0 + surface.triangle_count;
    surface_front[s] = t1 > t0 ? patches.front_patch_of_triangle[t0] : PatchSet::kNoPatch;
    surface_back[s] = t1 > t0 ? patches.back_patch_of_triangle[t0] : PatchSet::kNoPatch;
    for (std::uint32_t t = t0; t < t1; ++t) {
      if (patches.front_patch_of_triangle[t] != surface_front[s]) surface_front[s] = kByTriangle;
      if (patches.back_patch_of_triangle[t] != surface_back[s]) surface_back[s] = kByTriangle;
    }
  }

  const std::size_t n_surfaces = scene.surfaces.size();
  tbb::enumerable_thread_specific<Scratch> scratch([&] {
    Scratch s;
    s.count.assign(n_patches, 0);
    s.back_on_surface.assign(n_surfaces, 0);
    s.hits_on_surface.assign(n_surfaces, 0);
    s.rays.resize(kBatch);
    s.hits.resize(kBatch);
    s.offset.resize(kBatch);
    return s;
  });

  const auto start = std::chrono::steady_clock::now();
  std::uint64_t rays_total = 0;
  for (std::uint32_t p = begin; p < end; ++p) rays_total += rays_of(p);
  std::atomic<std::uint64_t> rays_done{0};
  std::mutex progress_mutex;
  double last_report = 0;

  auto run_chunk = [&](const Chunk& chunk, ChunkResult& out) {
    Scratch& s = scratch.local();
    const std::uint32_t p = chunk.patch;
    const bool back = patches.patches[p].side == Side::back;
    const float sign = back ? -1.0f : 1.0f;
    const std::uint32_t t_begin = patches.triangle_offset[p];
    const std::uint32_t t_end = patches.triangle_offset[p + 1];
    const double area = cumulative[t_end - 1];
    const std::uint64_t key = patch_stream_key(options.seed, p);
    const std::uint64_t N = rays_of(p);
    const double step = area / double(N);  // area per stratum
    // First triangle of this chunk's stratum; later rays advance monotonically.
    std::uint32_t j = static_cast<std::uint32_t>(
        std::upper_bound(cumulative.begin() + t_begin, cumulative.begin() + t_end,
                         area * double(chunk.first) / double(N)) -
        cumulative.begin());
    j = std::min(j, t_end - 1);

    for (std::uint64_t k0 = chunk.first; k0 < chunk.last; k0 += kBatch) {
      const std::size_t m = std::size_t(std::min<std::uint64_t>(kBatch, chunk.last - k0));
      for (std::size_t i = 0; i < m; ++i) {
        const std::uint64_t k = k0 + i;
        const auto u = ray_uniforms(key, k);
        // Stratum k of the patch's area, walked in triangle order (coherent origins).
        const double target = (double(k) + u[0]) * step;
        while (j + 1 < t_end && cumulative[j] <= target) ++j;
        const double below = j > t_begin ? cumulative[j - 1] : 0.0;
        const double r = std::min(std::max((target - below) * inverse_area[j], 0.0), 1.0 - 1e-16);
        const Barycentric bc = sample_triangle_uniform(r, u[1]);
        const Vec3 d = sample_cosine_hemisphere(u[2], u[3]);
        const TriangleFrame& f = frames[patches.triangle_index[j]];
        Ray& ray = s.rays[i];
        const float b1 = float(bc.b1), b2 = float(bc.b2);
        const float dx = float(d.x), dy = float(d.y), dz = float(d.z) * sign;
        for (int c = 0; c < 3; ++c) {
          ray.org[c] = f.v0[c] + b1 * f.e1[c] + b2 * f.e2[c] + sign * f.offset * f.n[c];
          ray.dir[c] = dx * f.t[c] + dy * f.b[c] + dz * f.n[c];
        }
        ray.tnear = 0;
        ray.tfar = 3.0e38f;
        s.offset[i] = f.offset;
      }
      tracer.trace(s.rays.data(), s.hits.data(), m);
      for (std::size_t i = 0; i < m; ++i) {
        RayHit& h = s.hits[i];
        s.retraced += h.retraced;
        // A back-face hit within a few offsets of the origin is not radiation arriving
        // anywhere: the sampled point rounded onto (or just behind) the plane of a neighbour
        // meeting the emitter at an edge. Trace on from just past it.
        for (int retry = 0;
             retry < 3 && h.triangle != RayHit::kMiss && !h.front && h.t < 4 * s.offset[i];
             ++retry) {
          s.rays[i].tnear = h.t + s.offset[i];
          tracer.trace(&s.rays[i], &h, 1);
        }
        if (h.triangle == RayHit::kMiss) {
          ++out.escaped;
          continue;
        }
        const std::uint32_t surface = h.surface;
        ++s.hits_on_surface[surface];
        std::uint32_t q = h.front ? surface_front[surface] : surface_back[surface];
        if (q == kByTriangle)
          q = h.front ? patches.front_patch_of_triangle[h.triangle]
                      : patches.back_patch_of_triangle[h.triangle];
        if (q == PatchSet::kNoPatch) {
          ++out.back_face;
          ++s.back_on_surface[surface];
          continue;
        }
        if (s.count[q]++ == 0) s.touched.push_back(q);
      }
    }
    std::sort(s.touched.begin(), s.touched.end());
    out.hits.reserve(s.touched.size());
    for (std::uint32_t q : s.touched) {
      out.hits.emplace_back(q, s.count[q]);
      s.count[q] = 0;
    }
    s.touched.clear();

    const std::uint64_t done = rays_done += chunk.last - chunk.first;
    if (options.progress) {
      std::unique_lock<std::mutex> lock(progress_mutex, std::try_to_lock);
      if (lock.owns_lock()) {
        const double now =
            std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
        if (now - last_report >= 0.25 || done == rays_total) {
          last_report = now;
          options.progress({done, rays_total, now});
        }
      }
    }
  };

  const int threads = options.threads > 0 ? options.threads : tbb::info::default_concurrency();
  tbb::task_arena arena(threads);
  arena.execute([&] {
    tbb::parallel_for(tbb::blocked_range<std::size_t>(0, chunks.size(), 1),
                      [&](const tbb::blocked_range<std::size_t>& range) {
                        for (std::size_t c = range.begin(); c != range.end(); ++c)
                          run_chunk(chunks[c], results[c]);
                      });
  });
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();

  // Merge chunk results row by row. Integer sums: the same in any order.
  Tallies tallies;
  tallies.patch_count = n_patches;
  tallies.emitter_begin = begin;
  tallies.back_face_hits_on_surface.assign(n_surfaces, 0);
  tallies.hits_on_surface.assign(n_surfaces, 0);
  for (const Scratch& s : scratch) {
    for (std::size_t i = 0; i < n_surfaces; ++i) {
      tallies.back_face_hits_on_surface[i] += s.back_on_surface[i];
      tallies.hits_on_surface[i] += s.hits_on_surface[i];
    }
  }
  std::vector<std::uint64_t> row_count(n_patches, 0);
  std::vector<std::uint32_t> touched;
  std::size_t c = 0;
  for (std::uint32_t p = begin; p < end; ++p) {
    std::uint64_t escaped = 0, back = 0;
    for (; c < chunks.size() && chunks[c].patch == p; ++c) {
      escaped += results[c].escaped;
      back += results[c].back_face;
      for (const auto& [q, n] : results[c].hits) {
        if (row_count[q] == 0) touched.push_back(q);
        row_count[q] += n;
      }
      results[c] = ChunkResult{};
    }
    std::sort(touched.begin(), touched.end());
    for (std::uint32_t q : touched) {
      tallies.hit_patch.push_back(q);
      tallies.hit_count.push_back(row_count[q]);
      row_count[q] = 0;
    }
    touched.clear();
    tallies.hit_offset.push_back(tallies.hit_patch.size());
    tallies.rays.push_back(rays_of(p));
    tallies.escaped.push_back(escaped);
    tallies.back_face.push_back(back);
  }

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
  if (shards.empty()) throw InputError("merge_shards: no shards given");
  Tallies merged;
  merged.patch_count = shards.front().patch_count;
  merged.emitter_begin = shards.front().emitter_begin;
  merged.back_face_hits_on_surface.assign(shards.front().back_face_hits_on_surface.size(), 0);
  merged.hits_on_surface.assign(shards.front().hits_on_surface.size(), 0);
  std::uint32_t next = merged.emitter_begin;
  for (const Tallies& s : shards) {
    if (s.patch_count != merged.patch_count || s.emitter_begin != next ||
        s.hits_on_surface.size() != merged.hits_on_surface.size())
      throw InputError(
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
