"""Meshes shared by the Python checks (run as scripts, so this folder is on sys.path)."""

# The unit cube with inward fronts, one group per face (front = counter-clockwise seen from
# inside), as tests/support/meshes.cpp builds it in C++ (unit_cube_obj, as quads here).
CUBE = """v 0 0 0
v 1 0 0
v 1 1 0
v 0 1 0
v 0 0 1
v 1 0 1
v 1 1 1
v 0 1 1
g floor
f 1 2 3 4
g roof
f 5 8 7 6
g south
f 1 5 6 2
g north
f 4 3 7 8
g west
f 1 4 8 5
g east
f 2 6 7 3
"""
