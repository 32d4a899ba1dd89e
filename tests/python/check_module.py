"""The Python module `hearthray`, used as a Python user would, checked against closed forms.

1. View factors of the unit cube (inward normals), the matrix with its geometry in three lines;
   the faces' factors against Howell, "A Catalog of Radiation Heat Transfer Configuration
   Factors", C-11 (opposite faces, 0.19982) and C-14 (adjacent faces, 0.20004) (formulas
   recalled from memory, as in check_hdf5.py), within 4 standard errors sqrt(F(1-F)/N).
2. A solve of the cube with a black floor at 1000 K and the other faces black at 300 K: the
   floor sees only the other faces (its factors sum to 1 once closure is enforced), so it
   loses sigma A (T1^4 - T2^4) by the Stefan-Boltzmann law with no ray noise; checked to
   1e-9 relative. sigma = 5.670374419e-8 W/(m2 K4) (CODATA 2018).
3. The example examples/python_view_factors.py runs.
Exits 77 (ctest: skipped) when numpy, scipy or the module is missing.

usage: check_module.py MODULE_DIR SCRATCH_DIR EXAMPLE
"""
import math
import os
import shutil
import subprocess
import sys

sys.path.insert(0, os.path.abspath(sys.argv[1]))
try:
    import numpy as np
    import scipy.sparse
except ImportError as missing:
    print(f"skipped: {missing} (install python3-numpy and python3-scipy, as scripts/setup does)")
    sys.exit(77)
import hearthray  # built by CMake when pybind11 is there; a failure here is a real failure

from fixtures import CUBE  # noqa: E402 (after the skip check)

SCENE = """[mesh]
file = "cube.obj"
[rays]
per_patch = 40_000
seed = 11
[defaults]
emissivity = 1
temperature = "300 K"
[surface.floor]
temperature = "1000 K"
"""
RAYS = 40_000
SIGMA = 5.670374419e-8  # W/(m2 K4), CODATA 2018


def check(condition, message):
    if not condition:
        sys.exit("FAILED: " + message)


def main():
    scratch = os.path.abspath(sys.argv[2])
    shutil.rmtree(scratch, ignore_errors=True)
    os.makedirs(scratch)
    obj = os.path.join(scratch, "cube.obj")
    with open(obj, "w") as f:
        f.write(CUBE)
    scene = os.path.join(scratch, "scene.toml")
    with open(scene, "w") as f:
        f.write(SCENE)
    cache = os.path.join(scratch, "cache")

    # 1. The matrix with its geometry in three lines.
    vf = hearthray.view_factors(obj, rays=RAYS, seed=3, cache_dir=cache)
    F, patches = vf["F"], vf["patches"]
    check(isinstance(F, scipy.sparse.csr_matrix), f"F is a {type(F)}")
    check(F.shape == (6, 7), f"shape {F.shape}")
    check(patches["name"] == ["floor", "roof", "south", "north", "west", "east"],
          f"names {patches['name']}")
    check(np.allclose(patches["area_m2"], 1, rtol=1e-12), "areas")
    check(np.allclose(patches["normal"][0], [0, 0, 1]) and
          np.allclose(patches["centroid_m"][0], [0.5, 0.5, 0]), "floor geometry")
    check(patches["triangle_offset"][-1] == len(vf["mesh"]["triangles"]), "triangle offsets")
    dense = F.toarray()
    check(np.max(np.abs(dense.sum(axis=1) - 1)) < 1e-12, "row sums")
    opposite, adjacent = 0.19982, 0.20004  # Howell C-11, C-14 for the unit cube (recalled)
    normals = patches["normal"]
    for i in range(6):
        for j in range(6):
            if i == j:
                continue
            ref = opposite if np.dot(normals[i], normals[j]) < 0 else adjacent
            sigma = math.sqrt(ref * (1 - ref) / RAYS)
            check(abs(dense[i, j] - ref) < 4 * sigma, f"F[{i},{j}] = {dense[i, j]}, ref {ref}")
    # The default sobol sampler: the binomial standard error times one ratio per row (the
    # replicates' spread pooled over the row), so the ratio is the same along a row.
    se = vf["standard_error"].toarray()
    ratio = [se[0, j] / math.sqrt(dense[0, j] * (1 - dense[0, j]) / RAYS) for j in (1, 2, 3)]
    check(abs(ratio[1] / ratio[0] - 1) < 1e-12 and abs(ratio[2] / ratio[0] - 1) < 1e-12
          and 0 < ratio[0] < 1, f"standard error ratios {ratio}")
    again = hearthray.view_factors(obj, rays=RAYS, seed=3, cache_dir=cache, threads=1)
    check(again["from_cache"], "second call from the cache")
    check((again["F"] != F).nnz == 0, "cached factors differ")
    try:
        hearthray.view_factors(os.path.join(scratch, "missing.obj"))
        check(False, "a missing mesh raised nothing")
    except hearthray.InputError as e:
        check("missing.obj" in str(e), f"message {e}")

    # 1b. Rays set by an error wanted: rounds until every factor's standard error is within it.
    wanted = 0.002
    vt = hearthray.view_factors(obj, rays=1000, seed=5, target_error=wanted, cache=False)
    target = vt["target"]
    check(target is not None and target["reached"] and target["stop"] == "target reached",
          f"target {target}")
    check(vt["standard_error"].max() <= wanted and target["achieved"] <= wanted,
          f"largest standard error {vt['standard_error'].max()} above {wanted}")
    rounds = target["round_rays"]
    check(len(rounds) >= 2 and all(b > a and b % a == 0 for a, b in zip(rounds, rounds[1:])),
          f"rounds {rounds}")
    capped = hearthray.view_factors(obj, rays=1000, seed=5, target_error="0.0001",
                                    max_rays=4096, cache=False)
    check(not capped["target"]["reached"] and capped["target"]["stop"] == "ray cap",
          f"capped target {capped['target']}")
    check(vf["target"] is None, "no target, no target report")
    for bad in (-1.0, "lots"):
        try:
            hearthray.view_factors(obj, target_error=bad, cache=False)
            check(False, f"target_error={bad!r} raised nothing")
        except hearthray.InputError as e:
            check("target_error" in str(e), f"message {e}")

    # 2. A solve: the hot black floor against the black 300 K rest of the cube.
    solved = hearthray.solve(scene, cache_dir=cache)
    check(solved["converged"], f"status {solved['status']}")
    surfaces = solved["surfaces"]
    floor = surfaces["name"].index("floor")
    expected = SIGMA * 1.0 * (1000.0 ** 4 - 300.0 ** 4)
    net = surfaces["net_W"][floor]
    check(abs(net - expected) < 1e-9 * expected, f"floor loses {net} W, expected {expected}")
    check(isinstance(surfaces["net_W"], np.ndarray) and len(surfaces["net_W"]) == 6, "table")
    check(abs(sum(surfaces["net_W"])) < 1e-9 * expected, "closed black cube: net sums to 0")
    check(solved["factors"]["F"].shape == (6, 7), "solve's factors")
    temperature = next(k for k in solved["patches"] if k.startswith("temperature"))
    check(len(solved["patches"][temperature]) == 6, "patch fields")

    # 3. The example.
    done = subprocess.run([sys.executable, sys.argv[3], obj], capture_output=True, text=True,
                          env=dict(os.environ, PYTHONPATH=os.path.abspath(sys.argv[1]),
                                   HEARTHRAY_CACHE=cache))
    check(done.returncode == 0 and "row sum 1.0000" in done.stdout,
          f"example: {done.stdout} {done.stderr}")
    print(f"ok: F {F.shape}, floor to roof {dense[0, 1]:.5f} (Howell C-11 {opposite}), "
          f"floor net {net:.3f} W (Stefan-Boltzmann {expected:.3f} W)")


main()
