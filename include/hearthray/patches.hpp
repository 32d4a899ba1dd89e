// Patches: the units that emit and receive rays and appear as rows and columns of the
// view-factor matrix. Today every surface side is one patch (a two-sided surface gives a front
// and a back patch); finer patches split a surface into pieces later. A patch is a set of
// triangles seen from one side.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "hearthray/scene.hpp"

namespace hearthray {

enum class Side : std::uint8_t { front, back };

struct Patch {
  std::string name;         // surface name; "name (front)" / "name (back)" when two-sided
  std::uint32_t surface = 0;
  Side side = Side::front;
  double area = 0;          // m^2
};

struct PatchSet {
  std::vector<Patch> patches;
  // Triangles of patch p: triangle_index[triangle_offset[p] .. triangle_offset[p+1]).
  std::vector<std::uint32_t> triangle_offset;
  std::vector<std::uint32_t> triangle_index;
  // Patch that receives a ray arriving at the front / back of each triangle; kNoPatch for the
  // back of a one-sided surface (such a hit is counted as a back-face hit).
  std::vector<std::uint32_t> front_patch_of_triangle;
  std::vector<std::uint32_t> back_patch_of_triangle;

  static constexpr std::uint32_t kNoPatch = 0xffffffffu;
  std::size_t size() const { return patches.size(); }
};

// One patch per surface side, in surface order (front before back).
PatchSet make_surface_patches(const Scene& scene);

}  // namespace hearthray
