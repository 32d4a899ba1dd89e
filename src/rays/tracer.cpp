#include "hearthray/tracer.hpp"

#include <embree3/rtcore.h>

#include <string>
#include <vector>

#include "hearthray/error.hpp"

namespace hearthray {

struct Tracer::Impl {
  RTCDevice device = nullptr;
  RTCScene scene = nullptr;   // the scene every ray is traced in first
  RTCScene robust = nullptr;  // EdgeMode::checked: robust copy for misses and back-face hits
  Vec3 centre;
  std::vector<float> vertices;                // centred, shared by the geometries
  std::vector<std::uint32_t> first_triangle;  // per surface (= Embree geometry id)

  ~Impl() {
    if (scene) rtcReleaseScene(scene);
    if (robust) rtcReleaseScene(robust);
    if (device) rtcReleaseDevice(device);
  }
};

namespace {

std::string device_error_text(RTCDevice device) {
  switch (rtcGetDeviceError(device)) {
    case RTC_ERROR_NONE:
      return "no error";
    case RTC_ERROR_INVALID_ARGUMENT:
      return "invalid argument";
    case RTC_ERROR_INVALID_OPERATION:
      return "invalid operation";
    case RTC_ERROR_OUT_OF_MEMORY:
      return "out of memory";
    case RTC_ERROR_UNSUPPORTED_CPU:
      return "unsupported CPU";
    case RTC_ERROR_CANCELLED:
      return "cancelled";
    default:
      return "unknown error";
  }
}

// One Embree geometry per surface over the shared vertex array: the hit's geometry id is the
// surface, known without a memory lookup per hit.
RTCScene build_scene(RTCDevice device, const Scene& scene, const std::vector<float>& vertices,
                     bool robust) {
  RTCScene rtc = rtcNewScene(device);
  rtcSetSceneFlags(rtc, robust ? RTC_SCENE_FLAG_ROBUST : RTC_SCENE_FLAG_NONE);
  rtcSetSceneBuildQuality(rtc, RTC_BUILD_QUALITY_HIGH);
  for (std::uint32_t s = 0; s < scene.surfaces.size(); ++s) {
    const Surface& surface = scene.surfaces[s];
    if (surface.triangle_count == 0) continue;
    RTCGeometry geom = rtcNewGeometry(device, RTC_GEOMETRY_TYPE_TRIANGLE);
    rtcSetSharedGeometryBuffer(geom, RTC_BUFFER_TYPE_VERTEX, 0, RTC_FORMAT_FLOAT3, vertices.data(),
                               0, 3 * sizeof(float), scene.vertices.size());
    auto* ib = static_cast<unsigned*>(
        rtcSetNewGeometryBuffer(geom, RTC_BUFFER_TYPE_INDEX, 0, RTC_FORMAT_UINT3,
                                3 * sizeof(unsigned), surface.triangle_count));
    for (std::uint32_t t = 0; t < surface.triangle_count; ++t)
      for (int k = 0; k < 3; ++k) ib[3 * t + k] = scene.triangles[surface.first_triangle + t].v[k];
    rtcCommitGeometry(geom);
    rtcAttachGeometryByID(rtc, geom, s);
    rtcReleaseGeometry(geom);
  }
  rtcCommitScene(rtc);
  return rtc;
}

// First hit of ray `r` in `rtc`, written to `h`.
inline void intersect(RTCScene rtc, RTCIntersectContext* context, const Ray& r,
                      const std::uint32_t* first_triangle, RayHit& h) {
  RTCRayHit rh;
  rh.ray.org_x = r.org[0];
  rh.ray.org_y = r.org[1];
  rh.ray.org_z = r.org[2];
  rh.ray.dir_x = r.dir[0];
  rh.ray.dir_y = r.dir[1];
  rh.ray.dir_z = r.dir[2];
  rh.ray.tnear = r.tnear;
  rh.ray.tfar = r.tfar;
  rh.ray.time = 0;
  rh.ray.mask = 0xffffffffu;
  rh.ray.id = 0;
  rh.ray.flags = 0;
  rh.hit.geomID = RTC_INVALID_GEOMETRY_ID;
  rh.hit.primID = RTC_INVALID_GEOMETRY_ID;
  rh.hit.instID[0] = RTC_INVALID_GEOMETRY_ID;
  rtcIntersect1(rtc, context, &rh);
  if (rh.hit.geomID == RTC_INVALID_GEOMETRY_ID) {
    h.triangle = RayHit::kMiss;
    h.surface = RayHit::kMiss;
    h.front = false;
    h.t = 0;
    return;
  }
  h.surface = rh.hit.geomID;
  h.triangle = first_triangle[rh.hit.geomID] + rh.hit.primID;
  // Embree's Ng is cross(v1 - v0, v2 - v0): along the counter-clockwise front normal
  // (checked in tests/test_tracer.cpp). Using it spares a lookup of our own normals.
  h.front = rh.hit.Ng_x * r.dir[0] + rh.hit.Ng_y * r.dir[1] + rh.hit.Ng_z * r.dir[2] < 0.0f;
  h.t = rh.ray.tfar;
}

}  // namespace

Tracer::Tracer(const Scene& scene, const TracerOptions& options) : impl_(new Impl) {
  if (scene.triangles.empty()) throw InputError(scene.source + ": the mesh has no triangles");
  std::string config = "verbose=0";
  if (options.build_threads > 0) config += ",threads=" + std::to_string(options.build_threads);
  impl_->device = rtcNewDevice(config.c_str());
  if (!impl_->device) throw std::runtime_error("Embree: cannot create a device");

  // One vertex array in the centred frame, shared by one Embree geometry per surface: the
  // hit's geometry id is then the surface, known without a memory lookup per hit.
  impl_->centre = (scene.bounds.lo + scene.bounds.hi) * 0.5;
  impl_->vertices.resize(3 * scene.vertices.size() + 4);  // Embree reads 16 bytes past the end
  for (std::size_t i = 0; i < scene.vertices.size(); ++i) {
    const Vec3 p = scene.vertices[i] - impl_->centre;
    impl_->vertices[3 * i + 0] = static_cast<float>(p.x);
    impl_->vertices[3 * i + 1] = static_cast<float>(p.y);
    impl_->vertices[3 * i + 2] = static_cast<float>(p.z);
  }
  impl_->first_triangle.resize(scene.surfaces.size());
  for (std::uint32_t s = 0; s < scene.surfaces.size(); ++s)
    impl_->first_triangle[s] = scene.surfaces[s].first_triangle;
  impl_->scene =
      build_scene(impl_->device, scene, impl_->vertices, options.edges == EdgeMode::robust);
  if (options.edges == EdgeMode::checked)
    impl_->robust = build_scene(impl_->device, scene, impl_->vertices, true);

  if (rtcGetDeviceError(impl_->device) != RTC_ERROR_NONE)
    throw std::runtime_error("Embree: " + device_error_text(impl_->device));
}

Tracer::~Tracer() = default;
const Vec3& Tracer::centre() const {
  return impl_->centre;
}
Tracer::Tracer(Tracer&&) noexcept = default;
Tracer& Tracer::operator=(Tracer&&) noexcept = default;

void Tracer::trace(const Ray* rays, RayHit* hits, std::size_t count) const {
  RTCIntersectContext context;
  rtcInitIntersectContext(&context);
  const std::uint32_t* first = impl_->first_triangle.data();
  for (std::size_t i = 0; i < count; ++i) {
    RayHit& h = hits[i];
    intersect(impl_->scene, &context, rays[i], first, h);
    h.retraced = false;
    if (impl_->robust && (h.triangle == RayHit::kMiss || !h.front)) {
      intersect(impl_->robust, &context, rays[i], first, h);
      h.retraced = true;
    }
  }
}

}  // namespace hearthray
