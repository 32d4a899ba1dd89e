// Tracer: owns the Embree device and scene (RAII); the only code that includes Embree.
// It answers one question for a batch of rays: which triangle does each ray hit first, and
// from which side.
#pragma once

#include <cstdint>
#include <memory>
#include <string>

#include "hearthray/scene.hpp"

namespace hearthray {

// How rays are kept from slipping through the shared edges of a mesh. Embree's default
// intersector lets ~1e-6 of rays through; its robust mode lets none through but costs about
// 20 % (measured by scripts/bench). In an enclosure a ray that slipped through a wall would be
// counted as radiation to the surroundings.
enum class EdgeMode {
  // Default intersector, and every ray that misses or lands on a back face is traced again in
  // robust mode. A ray that slips through a one-sided wall ends in one of those two ways (it
  // leaves the scene or meets the back of something), so it is always re-traced; in a closed
  // enclosure that is ~1e-6 of rays, and the speed is the default intersector's. Not covered:
  // a ray through an inner edge of a two-sided sheet landing on a front face behind it.
  checked,
  robust,  // robust intersector for every ray
  fast     // default intersector only: ~1e-6 of rays may leak (for measurements)
};

struct TracerOptions {
  EdgeMode edges = EdgeMode::checked;
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
  bool retraced = false;           // traced again in robust mode (EdgeMode::checked)
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
