// Panels placed on a flat surface of the mesh by position and size, so that a layout of
// heating panels is a scene file ([panel.NAME], scene_file.hpp) rather than a mesh of its own.
//
// Each panel is a rectangle in the plane of its host surface. It is cut out of the host: every
// host triangle that meets the rectangle is clipped against its four edge lines
// (Sutherland-Hodgman, one half-plane at a time); the part inside becomes the panel, each part
// outside is convex (the triangle less the half-planes already taken) and stays with the host.
// Parts are cut into triangles in their own plane by ear clipping (mesh/polygon.hpp). A point
// made inside a mesh edge becomes a corner of every triangle on that edge (neighbours that
// were not cut, of the host or of the surface beside it, are split there), so a closed mesh
// stays closed. The host keeps its area less the panel's; nothing lies on anything else.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "hearthray/geometry.hpp"
#include "hearthray/scene.hpp"

namespace hearthray {

struct PanelPlacement {
  std::string name;   // the new surface's name (not a surface of the mesh)
  std::string host;   // the flat surface it is cut out of
  Vec3 centre;        // metres, in the host's plane
  double length = 0;  // along `along`, metres
  double width = 0;   // across, in the host's plane, metres
  // Direction of the length in the host's plane (projected onto it). By default the first of
  // the axes x, y, z whose projection on the plane is at least half its length (x on a floor,
  // a ceiling or a wall facing y; y on a wall facing x).
  std::optional<Vec3> along;
  std::string where;  // said before each message, e.g. "room.toml:31: [panel.p1]"
};

// What one placement did: the panel's area and its host's before and after.
struct PanelCut {
  std::string name, host;
  double area = 0;              // m^2, the panel's (length x width)
  double host_area_before = 0;  // m^2
  double host_area_after = 0;   // m^2
};

// Cuts each panel out of its host, in order, and appends it to the scene as a surface
// (one-sided, facing as its host does). Throws InputError, naming the panel, when: the name
// is taken, the host does not exist or is not flat, or is itself a placed panel; the centre
// is off the host's plane; `along` is (nearly) normal to the plane; the size is not positive;
// the rectangle overlaps an earlier panel on the same host; or any of it lies off the host
// (past its edge or over a hole, such as a window). Panels may touch each other and the
// host's outline.
std::vector<PanelCut> place_panels(Scene* scene, const std::vector<PanelPlacement>& panels);

}  // namespace hearthray
