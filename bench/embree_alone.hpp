// Embree alone, for the benchmarks that compare hearthray with it: the rays hearthray emits,
// generated beforehand in the same way, and one Embree scene tracing them with rtcIntersect1.
// Shared by the benchmark programs; not a test fixture.
#pragma once

#include <embree3/rtcore.h>
#include <tbb/blocked_range.h>
#include <tbb/parallel_for.h>
#include <tbb/task_arena.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <vector>

#include "hearthray/patches.hpp"
#include "hearthray/sampling.hpp"
#include "hearthray/scene.hpp"
#include "hearthray/tracer.hpp"
#include "hearthray/view_factors.hpp"

namespace hearthray::bench {

inline double seconds_since(std::chrono::steady_clock::time_point t0) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

// The rays hearthray emits, generated the same way (same seed, strata and maps), in the
// tracer's frame (coordinates minus the bounding-box centre).
// Patches [first, last) (last 0: all).
inline std::vector<Ray> make_rays(const Scene& scene, const PatchSet& patches,
                                  std::uint64_t per_patch, std::uint32_t first = 0,
                                  std::uint32_t last = 0) {
  if (last == 0) last = std::uint32_t(patches.size());
  const Vec3 centre = (scene.bounds.lo + scene.bounds.hi) * 0.5;
  std::vector<Ray> rays;
  rays.reserve(per_patch * (last - first));
  const ViewFactorOptions defaults;
  for (std::uint32_t p = first; p < last; ++p) {
    const std::uint32_t t0 = patches.triangle_offset[p], t1 = patches.triangle_offset[p + 1];
    std::vector<double> cum;
    double sum = 0;
    for (std::uint32_t k = t0; k < t1; ++k)
      cum.push_back(sum += scene.triangle_area(patches.triangle_index[k]));
    const std::uint64_t key = patch_stream_key(defaults.seed, p);
    std::size_t j = 0;
    for (std::uint64_t k = 0; k < per_patch; ++k) {
      const auto u = ray_uniforms(key, k);
      const double target = sum * ((double(k) + u[0]) / double(per_patch));
      while (j + 1 < cum.size() && cum[j] <= target) ++j;
      const double below = j ? cum[j - 1] : 0.0;
      const double r = std::min((target - below) / (cum[j] - below), 1.0 - 1e-16);
      const std::uint32_t t = patches.triangle_index[t0 + j];
      const Triangle& tri = scene.triangles[t];
      const Vec3 a = scene.vertices[tri.v[0]] - centre, b = scene.vertices[tri.v[1]] - centre,
                 c = scene.vertices[tri.v[2]] - centre;
      const Barycentric bc = sample_triangle_uniform(r, u[1]);
      const Vec3 n = scene.normal(t);
      Vec3 tt, bb;
      orthonormal_basis(n, &tt, &bb);
      const Vec3 d = sample_cosine_hemisphere(u[2], u[3]);
      double scale = scene.bounds.diagonal() / 1024;
      for (const Vec3* v : {&a, &b, &c})
        scale = std::max({scale, std::fabs(v->x), std::fabs(v->y), std::fabs(v->z)});
      const Vec3 org = a + (b - a) * bc.b1 + (c - a) * bc.b2 + n * (scale / 65536.0);
      const Vec3 dir = tt * d.x + bb * d.y + n * d.z;
      Ray ray;
      for (int i = 0; i < 3; ++i) {
        ray.org[i] = float(org[i]);
        ray.dir[i] = float(dir[i]);
      }
      rays.push_back(ray);
    }
  }
  return rays;
}

// Embree alone: one geometry, the given flags, rtcIntersect1 over the pre-generated rays.
class EmbreeAlone {
 public:
  EmbreeAlone(const Scene& scene, bool robust) {
    device_ = rtcNewDevice("verbose=0");
    scene_ = rtcNewScene(device_);
    rtcSetSceneFlags(scene_, robust ? RTC_SCENE_FLAG_ROBUST : RTC_SCENE_FLAG_NONE);
    rtcSetSceneBuildQuality(scene_, RTC_BUILD_QUALITY_HIGH);
    const Vec3 centre = (scene.bounds.lo + scene.bounds.hi) * 0.5;
    RTCGeometry geom = rtcNewGeometry(device_, RTC_GEOMETRY_TYPE_TRIANGLE);
    auto* vb = static_cast<float*>(rtcSetNewGeometryBuffer(geom, RTC_BUFFER_TYPE_VERTEX, 0,
                                                           RTC_FORMAT_FLOAT3, 3 * sizeof(float),
                                                           scene.vertices.size()));
    for (std::size_t i = 0; i < scene.vertices.size(); ++i)
      for (int k = 0; k < 3; ++k) vb[3 * i + k] = float(scene.vertices[i][k] - centre[k]);
    auto* ib = static_cast<unsigned*>(
        rtcSetNewGeometryBuffer(geom, RTC_BUFFER_TYPE_INDEX, 0, RTC_FORMAT_UINT3,
                                3 * sizeof(unsigned), scene.triangles.size()));
    for (std::size_t t = 0; t < scene.triangles.size(); ++t)
      for (int k = 0; k < 3; ++k) ib[3 * t + k] = scene.triangles[t].v[k];
    rtcCommitGeometry(geom);
    rtcAttachGeometry(scene_, geom);
    rtcReleaseGeometry(geom);
    rtcCommitScene(scene_);
  }
  ~EmbreeAlone() {
    rtcReleaseScene(scene_);
    rtcReleaseDevice(device_);
  }
  // Seconds to trace all rays; `missed` gets the rays that hit nothing.
  double trace(tbb::task_arena& arena, const std::vector<Ray>& rays, std::uint64_t* missed) const {
    std::atomic<std::uint64_t> miss_total{0};
    const auto t0 = std::chrono::steady_clock::now();
    arena.execute([&] {
      tbb::parallel_for(tbb::blocked_range<std::size_t>(0, rays.size(), 16384),
                        [&](const tbb::blocked_range<std::size_t>& range) {
                          RTCIntersectContext ctx;
                          rtcInitIntersectContext(&ctx);
                          std::uint64_t miss = 0;
                          for (std::size_t i = range.begin(); i != range.end(); ++i) {
                            RTCRayHit rh;
                            rh.ray.org_x = rays[i].org[0];
                            rh.ray.org_y = rays[i].org[1];
                            rh.ray.org_z = rays[i].org[2];
                            rh.ray.dir_x = rays[i].dir[0];
                            rh.ray.dir_y = rays[i].dir[1];
                            rh.ray.dir_z = rays[i].dir[2];
                            rh.ray.tnear = 0;
                            rh.ray.tfar = 3.0e38f;
                            rh.ray.time = 0;
                            rh.ray.mask = 0xffffffffu;
                            rh.ray.id = 0;
                            rh.ray.flags = 0;
                            rh.hit.geomID = RTC_INVALID_GEOMETRY_ID;
                            rh.hit.instID[0] = RTC_INVALID_GEOMETRY_ID;
                            rtcIntersect1(scene_, &ctx, &rh);
                            miss += rh.hit.geomID == RTC_INVALID_GEOMETRY_ID;
                          }
                          miss_total += miss;
                        });
    });
    *missed = miss_total;
    return seconds_since(t0);
  }

 private:
  RTCDevice device_ = nullptr;
  RTCScene scene_ = nullptr;
};

}  // namespace hearthray::bench
