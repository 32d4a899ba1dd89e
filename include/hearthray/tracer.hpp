// Tracer: owns the Embree device and scene (RAII); the only code that includes Embree.
// It answers one question for a batch of rays: which triangle does each ray hit first, and
// from which side.
#pragma once

#include <cstdint>
#include <memory>
#include <string>

#include "hearthray/scene.hpp"

namespace hearthray {

struct TracerOptions {
  // Embree's robust mode closes the ~1e-6 gaps its default intersector leaves on shared
  // edges of a closed mesh, at 10-25 % of speed. On by default: in an enclosure a ray that
  // slips through an edge would be counted as radiation to the surroundings.
  bool robust = true;
  // Threads Embree may use to build its acceleration structure (0 = all).
  int build_threads = 0;
};

// A ray in float (Embree's precision), in the tracer's frame: scene coordinates minus
// Tracer::centre(), so that float resolution follows the scene's size and not its distance
// from the file's origin (a kiln drawn in site coordinates km away traces like one at 0).
// `tnear` and `tfar` bound the hit distance.
struct Ray {
  float org[3];
  float dir[3];
  float tnear = 0;
  float tfar = 3.0e38f;
};

struct RayHit {
  static constexpr std::uint32_t kMiss = 0xffffffffu;
  std::uint32_t triangle = kMiss;  // index into Scene::triangles, kMiss when nothing is hit
  std::uint32_t surface = kMiss;   // index into Scene::surfaces
  bool front = false;              // the ray arrived on the triangle's front side
  float t = 0;                     // hit distance
};

class Tracer {
 public:
  Tracer(const Scene& scene, const TracerOptions& options = {});
  ~Tracer();
  Tracer(Tracer&&) noexcept;
  Tracer& operator=(Tracer&&) noexcept;
  Tracer(const Tracer&) = delete;
  Tracer& operator=(const Tracer&) = delete;

  // Centre of the scene's bounding box: the origin of the frame rays are given in.
  const Vec3& centre() const;

  // Traces `count` rays; safe to call from many threads at once.
  void trace(const Ray* rays, RayHit* hits, std::size_t count) const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace hearthray
