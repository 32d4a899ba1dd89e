#include "hearthray/tracer.hpp"

#include <embree3/rtcore.h>

#include <string>
#include <vector>

#include "hearthray/error.hpp"

namespace hearthray {

struct Tracer::Impl {
  RTCDevice device = nullptr;
  RTCScene scene = nullptr;
  Vec3 centre;
  std::vector<float> vertices;                // centred, shared by the geometries
  std::vector<std::uint32_t> first_triangle;  // per surface (= Embree geometry id)

  ~Impl() {
    if (scene) rtcReleaseScene(scene);
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

}  // namespace

Tracer::Tracer(const Scene& scene, const TracerOptions& options) : impl_(new Impl) {
  if (scene.triangles.empty()) throw InputError(scene.source + ": the mesh has no triangles");
  std::string config = "verbose=0";
  if (options.build_threads > 0) config += ",threads=" + std::to_string(options.build_threads);
  impl_->device = rtcNewDevice(config.c_str());
  if (!impl_->device) throw std::runtime_error("Embree: cannot create a device");

  impl_->scene = rtcNewScene(impl_->device);
  rtcSetSceneFlags(impl_->scene, options.robust ? RTC_SCENE_FLAG_ROBUST : RTC_SCENE_FLAG_NONE);
  rtcSetSceneBuildQuality(impl_->scene, RTC_BUILD_QUALITY_HIGH);

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
  for (std::uint32_t s = 0; s < scene.surfaces.size(); ++s) {
    const Surface& surface = scene.surfaces[s];
    impl_->first_triangle[s] = surface.first_triangle;
    if (surface.triangle_count == 0) continue;
    RTCGeometry geom = rtcNewGeometry(impl_->device, RTC_GEOMETRY_TYPE_TRIANGLE);
    rtcSetSharedGeometryBuffer(geom, RTC_BUFFER_TYPE_VERTEX, 0, RTC_FORMAT_FLOAT3,
                               impl_->vertices.data(), 0, 3 * sizeof(float), scene.vertices.size());
    auto* ib = static_cast<unsigned*>(
        rtcSetNewGeometryBuffer(geom, RTC_BUFFER_TYPE_INDEX, 0, RTC_FORMAT_UINT3,
                                3 * sizeof(unsigned), surface.triangle_count));
    for (std::uint32_t t = 0; t < surface.triangle_count; ++t)
      for (int k = 0; k < 3; ++k) ib[3 * t + k] = scene.triangles[surface.first_triangle + t].v[k];
    rtcCommitGeometry(geom);
    rtcAttachGeometryByID(impl_->scene, geom, s);
    rtcReleaseGeometry(geom);
  }
  rtcCommitScene(impl_->scene);
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
  for (std::size_t i = 0; i < count; ++i) {
    const Ray& r = rays[i];
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
    rtcIntersect1(impl_->scene, &context, &rh);
    RayHit& h = hits[i];
    if (rh.hit.geomID == RTC_INVALID_GEOMETRY_ID) {
      h.triangle = RayHit::kMiss;
      h.front = false;
      h.t = 0;
      continue;
    }
    h.surface = rh.hit.geomID;
    h.triangle = impl_->first_triangle[rh.hit.geomID] + rh.hit.primID;
    // Embree's Ng is cross(v1 - v0, v2 - v0): along the counter-clockwise front normal
    // (checked in tests/test_tracer.cpp). Using it spares a lookup of our own normals.
    h.front = rh.hit.Ng_x * r.dir[0] + rh.hit.Ng_y * r.dir[1] + rh.hit.Ng_z * r.dir[2] < 0.0f;
    h.t = rh.ray.tfar;
  }
}

}  // namespace hearthray
