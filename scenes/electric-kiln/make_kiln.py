"""Invented for the demo; not a real product or building.

Generates kiln.obj: a top-loading electric kiln with a ware stack.

Firing chamber 600 x 600 x 700 mm (inside), two kiln shelves (20 mm thick slabs, modelled as
thin two-sided sheets) on three posts each, and pots standing on the floor and on each shelf.
Units: millimetres. Chamber walls face inward; ware and posts face outward.
"""
import os
import sys

sys.path.insert(0, os.path.join(os.path.dirname(__file__), ".."))
from objgen import Obj  # noqa: E402

W, D, H = 600.0, 600.0, 700.0
o = Obj(__doc__)

o.group("floor")
o.quad_grid((0, 0, 0), (W, 0, 0), (0, D, 0), 4, 4)           # normal +z
o.group("lid")
o.quad_grid((0, 0, H), (0, D, 0), (W, 0, 0), 4, 4)           # normal -z
o.group("walls")
o.quad_grid((0, 0, 0), (0, 0, H), (W, 0, 0), 4, 4)           # y = 0, normal +y
o.quad_grid((0, D, 0), (W, 0, 0), (0, 0, H), 4, 4)           # y = D, normal -y
o.quad_grid((0, 0, 0), (0, D, 0), (0, 0, H), 4, 4)           # x = 0, normal +x
o.quad_grid((W, 0, 0), (0, 0, H), (0, D, 0), 4, 4)           # x = W, normal -x

# Shelves: thin sheets 520 x 520 mm at 240 mm and 480 mm, seen from both sides.
for k, z in enumerate((240.0, 480.0)):
    o.group(f"shelf_{k + 1}")
    o.quad_grid((40, 40, z), (520, 0, 0), (0, 520, 0), 2, 2)    # front +z, back -z
    o.group("posts")
    for (x, y) in ((80, 80), (520, 80), (300, 520)):
        o.cylinder((x, y, z - 238.0), 15.0, 236.0, segments=12)

# Ware: pots on the floor and on each shelf, on 5 mm feet (left out); posts keep 2 mm clear of
# what they stand on and carry, so that no two surfaces overlap.
for k, z in enumerate((0.0, 240.0, 480.0)):
    o.group(f"ware_{k}")
    for (x, y) in ((200, 220), (400, 220), (300, 390)):
        o.cylinder((x, y, z + 5.0), 60.0, 150.0 if k < 2 else 140.0, segments=24)

o.write(os.path.join(os.path.dirname(__file__), "kiln.obj"))
