"""Invented for the demo; not a real product or building.

Generates furnace.obj: a small electric box furnace with a steel load on the hearth.

Chamber 600 (x) x 500 (y) x 400 (z) mm inside: the door is the front (y = 0), the heating
elements lie in the roof, the hearth is the floor. A steel block 300 x 200 x 80 mm rests on
three refractory bars 30 x 180 x 30 mm. Gaps of 2 mm between hearth and bars and between bars
and load keep every surface apart (none overlap or touch face to face).
Units: millimetres. Chamber sides face inward; load and bars face outward.
"""
import os
import sys

sys.path.insert(0, os.path.join(os.path.dirname(__file__), ".."))
from objgen import Obj, gridded_box, refine  # noqa: E402

W, D, H = 600.0, 500.0, 400.0             # chamber, inside
LOAD = ((150.0, 150.0), (450.0, 350.0))   # load footprint (x, y), lower and upper corner
BAR_X = (180.0, 300.0, 420.0)             # bar centres along x
BAR_W, BAR_Y, BAR_H = 30.0, (160.0, 340.0), 30.0
GAP = 2.0
LOAD_H = 80.0
CELL = 100.0                              # mesh cells at most this long

CHAMBER_GROUPS = {"bottom": "hearth", "top": "roof", "south": "door",
                  "north": "walls", "west": "walls", "east": "walls"}


def main():
    o = Obj(__doc__)
    chamber = gridded_box(refine([0.0, W], CELL), refine([0.0, D], CELL), refine([0.0, H], CELL),
                          lambda side, centre: CHAMBER_GROUPS[side], inward=True)
    # Fixed order: hearth, roof, door, walls.
    o.groups({name: chamber[name] for name in ("hearth", "roof", "door", "walls")})

    bars = {}
    for x in BAR_X:
        for name, quads in gridded_box([x - BAR_W / 2, x + BAR_W / 2], refine(list(BAR_Y), CELL),
                                       [GAP, GAP + BAR_H], lambda s, c: "supports",
                                       inward=False).items():
            bars.setdefault(name, []).extend(quads)
    o.groups(bars)

    z0 = GAP + BAR_H + GAP
    (x0, y0), (x1, y1) = LOAD
    o.groups(gridded_box(refine([x0, x1], CELL / 2), refine([y0, y1], CELL / 2),
                         refine([z0, z0 + LOAD_H], CELL / 2), lambda s, c: "load", inward=False))

    o.write(os.path.join(os.path.dirname(__file__), "furnace.obj"))


if __name__ == "__main__":
    main()
