// OBJ text of a small furnace written the way CAD and modelling programs export it (an
// invented scenario for tests): polygons rather than triangles, with collinear corners where a
// neighbouring face's edge is split (no T-junctions), a concave (L-shaped) end wall around a
// door, and optionally a block resting on two supports on the hearth, exported as touching
// closed solids. Coordinates in metres times `scale` (1000 writes the same furnace in mm).
//
// The chamber is [0, 2] x [0, 1] x [0, 1] m, fronts facing in, ten surfaces of 10 m^2 in all:
//   hearth_left  z = 0, x in [0, 1], 5 corners (one collinear, where the door meets it)
//   hearth_right z = 0, x in [1, 2], a square
//   roof         z = 1, a rectangle
//   wall_front   y = 0, 6 corners (two collinear: the hearth split and the door's top)
//   wall_back    y = 1, 5 corners (one collinear: the hearth split)
//   end_right    x = 2, a square
//   end_left     x = 0, the L-shaped (concave) wall around the door, 0.75 m^2
//   door         x = 0, y in [0, 0.5], z in [0, 0.5]
// With blocks: "support_a" and "support_b" (boxes 0.1 x 0.4 x 0.1 m standing on hearth_right,
// their bottoms on it) and "block" (0.7 x 0.4 x 0.3 m lying on the supports), outward fronts.
#pragma once

#include <string>

namespace hearthray::testing {

struct CadFurnace {
  bool blocks = false;      // the block on its supports
  bool flip_roof = false;   // the roof written with its front facing out (a flipped wall)
  double scale = 1;         // coordinates multiplied by this when written
  bool door = true;         // false: the door left out, a 0.5 x 0.5 m hole at x = 0
  bool sunk_block = false;  // a "block" box [1.3, 1.7] x [0.3, 0.7] x [-0.05, 0.25] m sunk
                            // 5 cm into the hearth: its sides cut hearth_right along the
                            // 1.6 m square round (1.5, 0.5, 0)
};

std::string cad_furnace_obj(const CadFurnace& options = {});

}  // namespace hearthray::testing
