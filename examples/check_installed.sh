#!/bin/sh
# Builds the example against an INSTALLED hearthray, the way a user consumes the package, and
# checks what it prints. Run by ctest (example-against-installed-package):
#   check_installed.sh <build dir> <source dir> <scratch dir> <C++ compiler> [compiler launcher]
# 1. cmake --install of the built tree into <scratch>/prefix;
# 2. examples/ configured as a separate project with find_package(hearthray) against that
#    prefix only, built with the same compiler, and run on examples/cube.obj;
# 3. the floor's row checked against Howell's unit-cube factors: opposite face (roof) 0.19982
#    (J. R. Howell, A Catalog of Radiation Heat Transfer Configuration Factors, C-11, parallel
#    aligned squares at unit distance), each adjacent face 0.20004 (C-14, perpendicular squares
#    with a common edge), each within 4 of the standard errors computed here from the catalogue
#    value and the ray count, sqrt(F (1 - F) / N); and the row summing to 1 within 1e-9
#    (closure is enforced by smoothing to 1e-13).
set -eu
build=$1
source=$2
scratch=$3
cxx=$4
launcher=${5:-}
rays=100000

rm -rf "$scratch"
mkdir -p "$scratch"
cmake --install "$build" --prefix "$scratch/prefix" > "$scratch/install.log"
cmake -S "$source/examples" -B "$scratch/build" -DCMAKE_BUILD_TYPE=Release \
  -DCMAKE_PREFIX_PATH="$scratch/prefix" -DCMAKE_FIND_USE_PACKAGE_REGISTRY=OFF \
  -DCMAKE_CXX_COMPILER="$cxx" ${launcher:+-DCMAKE_CXX_COMPILER_LAUNCHER="$launcher"} \
  > "$scratch/configure.log"
grep -q "hearthray_DIR:PATH=$scratch/prefix" "$scratch/build/CMakeCache.txt" || {
  echo "the example did not find the installed package in $scratch/prefix" >&2
  exit 1
}
cmake --build "$scratch/build" > "$scratch/build.log"
"$scratch/build/view_factor_row" "$source/examples/cube.obj" floor "$rays" > "$scratch/row.csv"
cat "$scratch/row.csv"

awk -F, -v n="$rays" '
  function check(name, f, expected,   sd) {
    sd = sqrt(expected * (1 - expected) / n)
    if ((f - expected) > 4 * sd || (expected - f) > 4 * sd) {
      printf "%s: %s, catalogue %s, more than 4 sd (%g) apart\n", name, f, expected, sd
      bad = 1
    }
    seen[name] = 1
  }
  $1 == "roof" { check($1, $2, 0.19982) }
  $1 == "south" || $1 == "north" || $1 == "west" || $1 == "east" { check($1, $2, 0.20004) }
  $1 == "floor" { print "floor sees itself: " $2; bad = 1 }
  $1 == "sum" {
    sum = $2
    if (sum - 1 > 1e-9 || 1 - sum > 1e-9) { print "row sum " sum " is not 1"; bad = 1 }
  }
  END {
    if (sum == "") { print "no row sum printed"; bad = 1 }
    for (k = split("roof south north west east", face, " "); k > 0; k--)
      if (!(face[k] in seen)) { print "no factor to " face[k]; bad = 1 }
    exit bad
  }' "$scratch/row.csv"
