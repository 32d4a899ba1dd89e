"""The HDF5 matrix file of `hearthray factors`, read as a user would: h5py and scipy.

Runs the built tool on a unit cube (inward normals) cut into 24 patches, reads F.h5 with the
layout the README gives, and checks it against the closed-form factors of the cube (Howell,
"A Catalog of Radiation Heat Transfer Configuration Factors", C-11 for opposite faces and C-14
for adjacent faces; formulas recalled from memory, the same ones tests/support/closed_forms.cpp
checks), the geometry of the cube, the sum rule and reciprocity, and the standard error
sqrt(F(1-F)/N). Exits 77 (ctest: skipped) when h5py or scipy is missing.

usage: check_hdf5.py HEARTHRAY SCRATCH_DIR
"""
import math
import os
import shutil
import subprocess
import sys

try:
    import h5py
    import numpy as np
    import scipy.sparse
except ImportError as missing:
    print(f"skipped: {missing} (install python3-h5py, python3-numpy and python3-scipy, "
          "as scripts/setup does)")
    sys.exit(77)

from fixtures import CUBE  # noqa: E402 (after the skip check)

SCENE = """[mesh]
file = "cube.obj"
[rays]
per_patch = 20_000
seed = 3
sampler = "stratified"
[defaults]
emissivity = 0.9
adiabatic = true
patches = "0.5 m"
"""
RAYS = 20_000
# Inward unit normal and a point of each face of the unit cube.
FACES = {"floor": ((0, 0, 1), 2, 0.0), "roof": ((0, 0, -1), 2, 1.0),
         "south": ((0, 1, 0), 1, 0.0), "north": ((0, -1, 0), 1, 1.0),
         "west": ((1, 0, 0), 0, 0.0), "east": ((-1, 0, 0), 0, 1.0)}


def parallel_squares(a, c):
    """Howell C-11: directly opposed a x a squares at distance c (recalled)."""
    x = y = a / c
    s = (math.log(math.sqrt((1 + x * x) * (1 + y * y) / (1 + x * x + y * y)))
         + x * math.sqrt(1 + y * y) * math.atan(x / math.sqrt(1 + y * y))
         + y * math.sqrt(1 + x * x) * math.atan(y / math.sqrt(1 + x * x))
         - x * math.atan(x) - y * math.atan(y))
    return 2 * s / (math.pi * x * y)


def perpendicular_squares(l, w, h):
    """Howell C-14: rectangles at 90 degrees sharing an edge of length l (recalled)."""
    H, W = h / l, w / l
    r = math.sqrt(H * H + W * W)
    a = (1 + W * W) * (1 + H * H) / (1 + W * W + H * H)
    b = (W * W * (1 + W * W + H * H) / ((1 + W * W) * (W * W + H * H))) ** (W * W)
    c = (H * H * (1 + H * H + W * W) / ((1 + H * H) * (H * H + W * W))) ** (H * H)
    return (W * math.atan(1 / W) + H * math.atan(1 / H) - r * math.atan(1 / r)
            + 0.25 * math.log(a * b * c)) / (math.pi * W)


def run(tool, scratch, *args):
    done = subprocess.run([tool, *args], cwd=scratch, capture_output=True, text=True,
                          env=dict(os.environ, HEARTHRAY_CACHE=os.path.join(scratch, "cache")))
    if done.returncode != 0:
        sys.exit(f"hearthray {' '.join(args)} failed ({done.returncode}): {done.stderr}")


def check(condition, message):
    if not condition:
        sys.exit("FAILED: " + message)


def main():
    tool, scratch = os.path.abspath(sys.argv[1]), os.path.abspath(sys.argv[2])
    shutil.rmtree(scratch, ignore_errors=True)
    os.makedirs(scratch)
    with open(os.path.join(scratch, "cube.obj"), "w") as f:
        f.write(CUBE)
    with open(os.path.join(scratch, "scene.toml"), "w") as f:
        f.write(SCENE)
    run(tool, scratch, "factors", "scene.toml", "--quiet", "--threads", "1", "-o", "F.h5")
    run(tool, scratch, "factors", "scene.toml", "--quiet", "--threads", "2", "--no-cache",
        "-o", "G.h5")
    with open(os.path.join(scratch, "F.h5"), "rb") as a, \
            open(os.path.join(scratch, "G.h5"), "rb") as b:
        check(a.read() == b.read(), "1 and 2 threads give different HDF5 files")

    with h5py.File(os.path.join(scratch, "F.h5"), "r") as h5:
        check(h5.attrs["format"] == "hearthray view factors", "format attribute")
        check(h5.attrs["format_version"] == 1, "format version")
        n = int(h5.attrs["patch_count"])
        check(n == 24, f"24 patches expected, got {n}")
        shape = tuple(int(v) for v in h5["F"].attrs["shape"])
        check(shape == (n, n + 1), f"shape {shape}")
        F = scipy.sparse.csr_matrix((h5["F/data"][:], h5["F/indices"][:], h5["F/indptr"][:]),
                                    shape=shape)
        se = scipy.sparse.csr_matrix(
            (h5["F/standard_error"][:], h5["F/indices"][:], h5["F/indptr"][:]), shape=shape)
        se_bits = h5["F/standard_error"][:].view(np.uint32)
        names = list(h5["patches/name"].asstr()[:])
        surfaces = list(h5["surfaces/name"].asstr()[:])
        surface = h5["patches/surface_index"][:]
        side = h5["patches/side"][:]
        area = h5["patches/area_m2"][:]
        centroid = h5["patches/centroid_m"][:]
        normal = h5["patches/normal"][:]
        rays = h5["patches/rays"][:]
        offsets = h5["patches/triangle_offset"][:]
        vertices = h5["mesh/vertices_m"][:]
        triangles = h5["mesh/triangles"][:]
        check(int(h5["run"].attrs["seed"]) == 3, "seed in /run")
        check(h5["F/data"].compression == "gzip", "F/data is deflated")

    check(surfaces == list(FACES), f"surface names {surfaces}")
    check(all((rays == RAYS)), "rays per patch")
    check(np.all(side == 0), "one-sided cube: front sides only")
    dense = F.toarray()
    # Closed cube: every row sums to 1, nothing to the surroundings; reciprocity exact.
    check(np.max(np.abs(dense.sum(axis=1) - 1)) < 1e-12, "row sums")
    check(np.max(np.abs(dense[:, n])) < 1e-12, "surroundings column")
    exchange = area[:, None] * dense[:, :n]
    check(np.max(np.abs(exchange - exchange.T)) < 1e-12, "reciprocity A_i F_ij = A_j F_ji")
    # Standard errors (stratified sampler, as the scene asks) are sqrt(F(1-F)/N) of each entry,
    # stored as float32 rounded to 16 significant bits (README: the low byte of each float's
    # significand is zero, relative rounding at most 2^-16, about 1.53e-5).
    expected = np.sqrt(F.data * (1 - F.data) / np.repeat(rays, np.diff(F.indptr)))
    check(np.allclose(se.data, expected, rtol=1.53e-5, atol=0), "standard errors")
    check(len(se_bits) > 0 and not np.any(se_bits & 0xFF), "16 significant bits")
    # To the bit: the double sqrt(p (1 - p) / N) rounded half away from zero to 16 significant
    # bits (2^36 added to its bits, the low 37 cleared), then made a float32 (exact).
    bits = expected.astype(np.float64).view(np.uint64)
    rounded = ((bits + np.uint64(1 << 36)) & ~np.uint64((1 << 37) - 1)).view(np.float64)
    check(np.array_equal(se.data.view(np.uint32), rounded.astype(np.float32).view(np.uint32)),
          "standard errors stored to the bit as the README's rounding gives them")

    # Patch geometry: each patch a quarter of its face (0.25 m2), centroid on the face's plane
    # at a quarter point, normal the face's inward normal; its triangles cover its area.
    for p in range(n):
        face = surfaces[surface[p]]
        inward, axis, level = FACES[face]
        check(names[p].startswith(face + "#"), f"patch {p} name {names[p]}")
        check(abs(area[p] - 0.25) < 1e-12, f"patch {p} area {area[p]}")
        check(np.allclose(normal[p], inward, atol=1e-12), f"patch {p} normal {normal[p]}")
        check(abs(centroid[p][axis] - level) < 1e-12, f"patch {p} centroid off its face")
        for other in range(3):
            if other != axis:
                check(min(abs(centroid[p][other] - 0.25), abs(centroid[p][other] - 0.75)) < 1e-12,
                      f"patch {p} centroid {centroid[p]}")
        covered = 0.0
        for t in triangles[offsets[p]:offsets[p + 1]]:
            a, b, c = vertices[t[0]], vertices[t[1]], vertices[t[2]]
            doubled = np.cross(b - a, c - a)
            check(np.dot(doubled, inward) > 0, f"patch {p}: a triangle faces away")
            covered += np.linalg.norm(doubled) / 2
        check(abs(covered - area[p]) < 1e-12, f"patch {p}: triangles cover {covered}")

    # Face-to-face factors from the patches against Howell's closed forms, within 4 standard
    # errors of a factor from the 4 x RAYS rays of a face (the smoothing moves factors by a few
    # standard errors of single patches at most, and the face sums average those out).
    opposite, adjacent = parallel_squares(1, 1), perpendicular_squares(1, 1, 1)
    check(abs(opposite - 0.19982) < 5e-5 and abs(adjacent - 0.20004) < 5e-5,
          f"closed forms {opposite} {adjacent}")
    member = np.zeros((len(surfaces), n))
    member[surface, np.arange(n)] = 1
    face_area = member @ area
    face_f = (member * area) @ dense[:, :n] @ member.T / face_area[:, None]
    for i, fi in enumerate(surfaces):
        for j, fj in enumerate(surfaces):
            if i == j:
                continue
            ni, nj = FACES[fi][0], FACES[fj][0]
            ref = opposite if np.dot(ni, nj) < 0 else adjacent
            sigma = math.sqrt(ref * (1 - ref) / (4 * RAYS))
            check(abs(face_f[i, j] - ref) < 4 * sigma,
                  f"{fi} -> {fj}: {face_f[i, j]} against {ref} (sigma {sigma})")
    # Patch to patch: each 0.5 x 0.5 quarter of the floor to the quarter of the roof straight
    # above it, a pair of directly opposed squares at distance 1 (Howell C-11 again), within 4
    # standard errors of a factor from RAYS rays.
    quarter = parallel_squares(0.5, 1)
    floor, roof = surfaces.index("floor"), surfaces.index("roof")
    pairs = 0
    for p in np.flatnonzero(surface == floor):
        for q in np.flatnonzero(surface == roof):
            if np.allclose(centroid[p][:2], centroid[q][:2], atol=1e-12):
                sigma = math.sqrt(quarter * (1 - quarter) / RAYS)
                check(abs(dense[p, q] - quarter) < 4 * sigma,
                      f"{names[p]} -> {names[q]}: {dense[p, q]} against {quarter}")
                pairs += 1
    check(pairs == 4, f"{pairs} floor/roof pairs above each other")
    print(f"ok: {n} patches, {F.nnz} entries, opposite {face_f[0, 1]:.5f} "
          f"(Howell C-11 {opposite:.5f}), adjacent {face_f[0, 2]:.5f} (C-14 {adjacent:.5f}), "
          f"quarter to the quarter above {dense[0, :n][surface == roof].max():.5f} "
          f"(C-11 {quarter:.5f})")


main()
