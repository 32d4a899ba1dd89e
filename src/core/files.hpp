// Reading input files safely: only regular files (a FIFO would block, /dev/zero never ends),
// and no more than a stated size.
#pragma once

#include <cstdint>
#include <string>

namespace hearthray {

// Largest OBJ mesh, scene file and material library read (bytes). An OBJ of 1 GiB holds some
// 20 million triangles, beyond what a run can trace in a day on a workstation.
inline constexpr std::uint64_t kMaxMeshBytes = std::uint64_t{1} << 30;
inline constexpr std::uint64_t kMaxSceneFileBytes = std::uint64_t{16} << 20;
inline constexpr std::uint64_t kMaxMaterialBytes = std::uint64_t{64} << 20;

// The bytes of the regular file `path`. Throws InputError naming `what` (e.g. "mesh file")
// when it does not exist, is a folder, a device, a FIFO or a socket, is larger than
// `max_bytes`, or cannot be read.
std::string read_regular_file(const std::string& path, const std::string& what,
                              std::uint64_t max_bytes);

}  // namespace hearthray
