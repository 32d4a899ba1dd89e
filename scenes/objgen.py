"""Small OBJ writer used to generate the demo scenes (invented geometry).

Conventions as in hearthray: the front side of a face is the side from which its vertices run
counter-clockwise; one group per surface.
"""
import math


class Obj:
    def __init__(self, header):
        self.lines = [("# " + line).rstrip() for line in header.strip().splitlines()]
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

    def groups(self, quads_by_group):
        """Writes {group: [quad, ...]} as OBJ groups, in the dict's order."""
        for name, quads in quads_by_group.items():
            if not quads:
                continue
            self.group(name)
            for quad in quads:
                self.face(quad)

    def write(self, path):
        with open(path, "w") as f:
            f.write("\n".join(self.lines) + "\n")


def refine(breaks, max_step):
    """Sorted break list with extra breaks so that no interval is longer than max_step."""
    out = [breaks[0]]
    for a, b in zip(breaks, breaks[1:]):
        n = max(1, math.ceil((b - a) / max_step - 1e-9))
        out.extend(a + (b - a) * k / n for k in range(1, n))
        out.append(b)
    return out


# For each side of a box: the fixed axis, whether it sits at the low or high end, and the two
# axes (a, b) along which a cell (a0,b0) (a1,b0) (a1,b1) (a0,b1) runs counter-clockwise seen
# from outside the box (a x b points out).
_SIDES = {
    "bottom": (2, 0, 1, 0),  # z = min, y x x = -z
    "top": (2, 1, 0, 1),     # z = max, x x y = +z
    "south": (1, 0, 0, 2),   # y = min, x x z = -y
    "north": (1, 1, 2, 0),   # y = max, z x x = +y
    "west": (0, 0, 2, 1),    # x = min, z x y = -x
    "east": (0, 1, 1, 2),    # x = max, y x z = +x
}


def gridded_box(xs, ys, zs, assign, inward=True):
    """Quads covering the six sides of the box [xs[0], xs[-1]] x [ys[0], ys[-1]] x [zs[0],
    zs[-1]], each side split along every break of the sorted lists xs, ys, zs. Sides meeting at
    an edge then share their vertices (a watertight mesh without T-junctions), and a window or
    a panel is a set of cells whose edges lie on breaks.

    assign(side, centre) names the group of the cell with this centre (x, y, z) on this side
    ("bottom", "top", "south" (y min), "north", "west" (x min), "east"), or None to leave the
    cell out. Returns {group: [quad, ...]} in order of first use; fronts face into the box
    when inward, out of it otherwise."""
    axes = (xs, ys, zs)
    out = {}
    for side, (fixed, high, a, b) in _SIDES.items():
        level = axes[fixed][-1 if high else 0]
        for b0, b1 in zip(axes[b], axes[b][1:]):
            for a0, a1 in zip(axes[a], axes[a][1:]):
                def point(u, v):
                    p = [0.0, 0.0, 0.0]
                    p[fixed], p[a], p[b] = level, u, v
                    return tuple(p)
                quad = [point(a0, b0), point(a1, b0), point(a1, b1), point(a0, b1)]
                centre = point((a0 + a1) / 2, (b0 + b1) / 2)
                name = assign(side, centre)
                if name is None:
                    continue
                out.setdefault(name, []).append(list(reversed(quad)) if inward else quad)
    return out
