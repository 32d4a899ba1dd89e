"""Small OBJ writer used to generate the demo scenes (invented geometry).

Conventions as in hearthray: the front side of a face is the side from which its vertices run
counter-clockwise; one group per surface.
"""
import math


class Obj:
    def __init__(self, header):
        self.lines = ["# " + line for line in header.strip().splitlines()]
        self.nv = 0

    def group(self, name):
        self.lines.append(f"g {name}")

    def v(self, p):
        self.lines.append("v {:.6g} {:.6g} {:.6g}".format(*p))
        self.nv += 1
        return self.nv

    def face(self, pts):
        idx = [self.v(p) for p in pts]
        self.lines.append("f " + " ".join(str(i) for i in idx))

    def quad_grid(self, origin, u, v, nu, nv):
        """Rectangle origin + s*u + t*v split into nu x nv quads; front along u x v."""
        for j in range(nv):
            for i in range(nu):
                p = lambda a, b: tuple(origin[k] + u[k] * a / nu + v[k] * b / nv for k in range(3))
                self.face([p(i, j), p(i + 1, j), p(i + 1, j + 1), p(i, j + 1)])

    def box(self, lo, hi, inward=False, skip=()):
        """Axis-aligned box; normals outward (or inward). `skip` names faces to leave out."""
        x0, y0, z0 = lo
        x1, y1, z1 = hi
        faces = {
            "bottom": [(x0, y0, z0), (x0, y1, z0), (x1, y1, z0), (x1, y0, z0)],
            "top": [(x0, y0, z1), (x1, y0, z1), (x1, y1, z1), (x0, y1, z1)],
            "south": [(x0, y0, z0), (x1, y0, z0), (x1, y0, z1), (x0, y0, z1)],
            "north": [(x0, y1, z0), (x0, y1, z1), (x1, y1, z1), (x1, y1, z0)],
            "west": [(x0, y0, z0), (x0, y0, z1), (x0, y1, z1), (x0, y1, z0)],
            "east": [(x1, y0, z0), (x1, y1, z0), (x1, y1, z1), (x1, y0, z1)],
        }
        for name, pts in faces.items():
            if name in skip:
                continue
            self.face(list(reversed(pts)) if inward else pts)

    def cylinder(self, centre, radius, height, segments=24, caps=True):
        """Closed vertical cylinder standing on centre (x, y, z), normals outward."""
        cx, cy, cz = centre
        ring = [(cx + radius * math.cos(2 * math.pi * i / segments),
                 cy + radius * math.sin(2 * math.pi * i / segments)) for i in range(segments)]
        for i in range(segments):
            (x0, y0), (x1, y1) = ring[i], ring[(i + 1) % segments]
            self.face([(x0, y0, cz), (x1, y1, cz), (x1, y1, cz + height), (x0, y0, cz + height)])
        if caps:
            self.face([(x, y, cz + height) for x, y in ring])
            self.face([(x, y, cz) for x, y in reversed(ring)])

    def write(self, path):
        with open(path, "w") as f:
            f.write("\n".join(self.lines) + "\n")
