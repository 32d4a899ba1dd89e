// Vertices welded by position, shared by the topology report and the gap finder.
#pragma once

#include <cstdint>
#include <vector>

#include "hearthray/geometry.hpp"

namespace hearthray::mesh_detail {

// Per vertex an id shared by all vertices at exactly the same position.
std::vector<std::uint32_t> weld_by_position(const std::vector<Vec3>& vertices);

}  // namespace hearthray::mesh_detail
