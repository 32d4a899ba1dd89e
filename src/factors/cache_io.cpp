// The mesh part of cache keys and the atomic write of a cache file (see cache_io.hpp).
#include "factors/cache_io.hpp"

#include <unistd.h>

#include <atomic>
#include <filesystem>
#include <fstream>

namespace hearthray {
namespace cache_io {

void hash_mesh(Hasher& h, const std::string& mesh_bytes, const MeshOptions& mesh,
               const Scene& scene, const std::vector<PatchSpec>& patch_specs,
               const std::vector<PanelPlacement>& panels) {
  h.bytes(mesh_bytes.data(), mesh_bytes.size());
  h.u64(mesh_bytes.size());
  h.text(to_string(mesh.unit));
  h.u64(mesh.surfaces_from == SurfacesFrom::groups ? 0 : 1);
  h.real(mesh.degenerate_relative_area);
  h.u64(panels.size());
  for (const PanelPlacement& p : panels) {
    h.text(p.name);
    h.text(p.host);
    for (const double v : {p.centre.x, p.centre.y, p.centre.z, p.length, p.width}) h.real(v);
    h.u64(p.along ? 1 : 0);
    if (p.along)
      for (const double v : {p.along->x, p.along->y, p.along->z}) h.real(v);
  }
  h.u64(scene.surfaces.size());
  for (std::size_t i = 0; i < scene.surfaces.size(); ++i) {
    const Surface& s = scene.surfaces[i];
    h.text(s.name);
    h.u64(s.two_sided ? 1 : 0);
    const PatchSpec spec = i < patch_specs.size() ? patch_specs[i] : PatchSpec{};
    h.u64(static_cast<std::uint64_t>(spec.mode));
    h.real(spec.size);
  }
}

std::string read_cache_file(const std::string& path, const char (&magic)[8], std::uint32_t layout,
                            const TallyCacheKey& key, std::size_t header_bytes,
                            const std::string& what, std::string* data, std::uint32_t* flags) {
  {
    // Read straight into a string of the file's size: through a string stream the bytes were
    // copied three times, and held twice (a 98,592-patch cache is 1.7 GB).
    std::error_code error;
    const std::uintmax_t bytes = std::filesystem::file_size(path, error);  // fails on a folder
    std::ifstream in(path, std::ios::binary | std::ios::ate);
    const std::streamoff size = in ? std::streamoff(in.tellg()) : -1;
    if (error || size < 0 || std::uintmax_t(size) != bytes) return "it could not be read";
    data->resize(static_cast<std::size_t>(size));
    in.seekg(0);
    if (!in.read(data->data(), size)) return "it could not be read";
  }
  if (data->size() < header_bytes) return "it is too short to hold a header";
  if (std::memcmp(data->data(), magic, sizeof magic) != 0) return "it is not a " + what;
  Cursor c{*data, sizeof magic};
  const std::uint32_t version = c.u32();
  *flags = c.u32();
  if (version != layout)
    return "its layout version is " + std::to_string(version) + ", expected " +
           std::to_string(layout);
  TallyCacheKey stored;
  stored.fnv = c.u64();
  stored.mix = c.u64();
  if (!(stored == key)) return "it was made for another key";
  return "";
}

std::string check_cache_body(const std::string& data, std::uint64_t fixed, std::uint64_t per_item,
                             std::uint64_t items, std::size_t header_bytes,
                             const TallyCacheKey& checksum) {
  if (data.size() < fixed || (data.size() - fixed) % per_item != 0 ||
      (data.size() - fixed) / per_item != items)
    return "its length does not match its header (a truncated or damaged file)";
  if (!(payload_hash(data, header_bytes) == checksum))
    return "its contents do not match their checksum (a damaged file)";
  return "";
}

CacheWrite write_cache_file(const std::string& dir, const std::string& path,
                            const std::string& data) {
  namespace fs = std::filesystem;
  CacheWrite out;
  out.path = path;
  std::error_code ec;
  fs::create_directories(dir, ec);
  if (ec) {
    out.reason = "cannot create the cache folder '" + dir + "': " + ec.message();
    return out;
  }
  // A name no other writer uses, so that two solves of one scene at once cannot mix bytes.
  static std::atomic<unsigned> counter{0};
  const std::string temporary =
      out.path + ".tmp." + std::to_string(::getpid()) + "." + std::to_string(counter++);
  {
    std::ofstream file(temporary, std::ios::binary | std::ios::trunc);
    file.write(data.data(), static_cast<std::streamsize>(data.size()));
    if (!file) {
      fs::remove(temporary, ec);
      out.reason = "cannot write '" + temporary + "'";
      return out;
    }
  }
  fs::rename(temporary, out.path, ec);
  if (ec) {
    fs::remove(temporary, ec);
    out.reason = "cannot move the cache file into place at '" + out.path + "'";
    return out;
  }
  out.stored = true;
  return out;
}

}  // namespace cache_io
}  // namespace hearthray
