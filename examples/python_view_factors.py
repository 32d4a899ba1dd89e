"""View factors of a scene in Python, with what each row is (an example for library users).

Build hearthray (the Python module needs Debian's pybind11-dev and python3-dev, the results
numpy and scipy), then run from the repository:

    PYTHONPATH=build/python python3 examples/python_view_factors.py examples/cube.obj

The matrix F is a scipy CSR matrix of N rows and N + 1 columns: row i and column i are patch i
(vf["patches"]), the last column is the surroundings. Results are engineering estimates.
"""
import sys

import hearthray

# The three lines: the matrix with its geometry.
vf = hearthray.view_factors(sys.argv[1] if len(sys.argv) > 1 else "examples/cube.obj", rays=20_000)
F, patches = vf["F"], vf["patches"]
print(F.shape, "patches:", ", ".join(patches["name"]))

# What a row means: the patch's surface, side, area, centroid and normal, then its factors.
row = 0
print(f"row {row}: {patches['name'][row]} ({patches['surface'][row]}, {patches['side'][row]}), "
      f"area {patches['area_m2'][row]:.4g} m2, centroid {patches['centroid_m'][row]}, "
      f"normal {patches['normal'][row]}")
names = patches["name"] + ["surroundings"]
for j, f in zip(F[row].indices, F[row].data):
    print(f"  F to {names[j]:12s} {f:.5f} +- {vf['standard_error'][row, j]:.5f}")
print(f"  row sum {F[row].sum():.12f}")
