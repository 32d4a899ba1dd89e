// The tracer's one job: first triangle hit and the side it was hit from.
#include <catch2/catch.hpp>
#include <sstream>

#include "hearthray/scene.hpp"
#include "hearthray/tracer.hpp"

using namespace hearthray;

namespace {

// Rays are given in the tracer's frame, centred on the scene's bounding box.
Vec3 g_centre;
Ray make_ray(float ox, float oy, float oz, float dx, float dy, float dz) {
  Ray r;
  r.org[0] = ox - float(g_centre.x), r.org[1] = oy - float(g_centre.y),
  r.org[2] = oz - float(g_centre.z);
  r.dir[0] = dx, r.dir[1] = dy, r.dir[2] = dz;
  return r;
}

}  // namespace

TEST_CASE("tracer reports the nearest triangle and the side it was hit from", "[tracer]") {
  // Two unit squares at z = 1 (front +z, counter-clockwise seen from above) and z = 2 (front
  // -z); one-sided surfaces, grouped.
  std::istringstream obj(R"(v 0 0 1
v 1 0 1
v 1 1 1
v 0 1 1
v 0 0 2
v 1 0 2
v 1 1 2
v 0 1 2
g low
f 1 2 3 4
g high
f 5 8 7 6
)");
  const Scene scene = load_obj(obj, "two squares");
  const Tracer tracer(scene);
  g_centre = tracer.centre();
  CHECK(norm(g_centre - Vec3{0.5, 0.5, 1.5}) < 1e-12);

  const Ray rays[4] = {
      make_ray(0.3f, 0.3f, 0.0f, 0, 0, 1),   // from below: back of `low`
      make_ray(0.3f, 0.3f, 1.5f, 0, 0, -1),  // from between, down: front of `low`
      make_ray(0.3f, 0.3f, 1.5f, 0, 0, 1),   // from between, up: front of `high`
      make_ray(2.0f, 2.0f, 1.5f, 0, 0, 1),   // beside both: misses
  };
  RayHit hits[4];
  tracer.trace(rays, hits, 4);

  auto surface_of = [&](const RayHit& h) {
    return scene.surfaces[scene.triangles[h.triangle].surface].name;
  };
  REQUIRE(hits[0].triangle != RayHit::kMiss);
  CHECK(surface_of(hits[0]) == "low");
  CHECK_FALSE(hits[0].front);
  CHECK(hits[0].t == Approx(1.0f));
  REQUIRE(hits[1].triangle != RayHit::kMiss);
  CHECK(surface_of(hits[1]) == "low");
  CHECK(hits[1].front);
  CHECK(hits[1].t == Approx(0.5f));
  REQUIRE(hits[2].triangle != RayHit::kMiss);
  CHECK(surface_of(hits[2]) == "high");
  CHECK(hits[2].front);
  CHECK(hits[3].triangle == RayHit::kMiss);
}
