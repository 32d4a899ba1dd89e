"""Invented for the demo; not a real product or plant.

Generates gas-furnace.obj: a gas-fired box furnace heating steel billets.

Chamber 4000 (x) x 1600 (y) x 1400 (z) mm inside. The burner fires along +x from the front
wall (x = 0); the products leave through a flue opening 400 x 400 mm high in the back wall
(x = 4000). Five square billets 160 x 160 x 1200 mm lie across the furnace 20 mm above the
hearth (the skids that carry them are not modelled). Units: millimetres. Chamber sides face inward; billets face outward.
"""
import os
import sys

sys.path.insert(0, os.path.join(os.path.dirname(__file__), ".."))
from objgen import Obj, gridded_box, refine  # noqa: E402

L, W, H = 4000.0, 1600.0, 1400.0
FLUE_Y, FLUE_Z = (600.0, 1000.0), (800.0, 1200.0)     # flue opening in the back wall
BILLET, BILLET_LEN, LIFT = 160.0, 1200.0, 20.0
BILLET_X = (900.0, 1500.0, 2100.0, 2700.0, 3300.0)     # billet centres along x
CELL = 200.0


def chamber_group(side, centre):
    x, y, z = centre
    if side == "east" and FLUE_Y[0] < y < FLUE_Y[1] and FLUE_Z[0] < z < FLUE_Z[1]:
        return "flue"
    return {"bottom": "hearth", "top": "roof", "west": "front", "east": "back",
            "south": "side_walls", "north": "side_walls"}[side]


def main():
    o = Obj(__doc__)
    ys = sorted(set(refine([0.0, W], CELL) + list(FLUE_Y)))
    zs = sorted(set(refine([0.0, H], CELL) + list(FLUE_Z)))
    chamber = gridded_box(refine([0.0, L], CELL), ys, zs, chamber_group, inward=True)
    o.groups({name: chamber[name] for name in ("hearth", "roof", "front", "back", "side_walls",
                                               "flue")})
    y0 = (W - BILLET_LEN) / 2
    for i, x in enumerate(BILLET_X):
        o.groups(gridded_box([x - BILLET / 2, x + BILLET / 2], refine([y0, y0 + BILLET_LEN], CELL),
                             [LIFT, LIFT + BILLET], lambda s, c, i=i: f"billet_{i + 1}",
                             inward=False))
    o.write(os.path.join(os.path.dirname(__file__), "gas-furnace.obj"))


if __name__ == "__main__":
    main()
