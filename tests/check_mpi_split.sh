#!/bin/sh
# The tool under `mpirun -np 2` against one process (ctest mpi-split): the files it writes must
# be byte-identical (cmp), since the tallies are keyed by (seed, patch) and the split moves
# only the place where a patch is traced. report.json and view_factors.json carry the tracing
# time, rays per second and threads, which differ from run to run: they are compared with
# those lines removed. Also: bad input under mpirun ends every process with exit 2 and one
# message; a cache hit on process 0 ends the helpers (no hang). Exits 77 (ctest: skipped)
# without an MPI launcher or a tool built without MPI.
#
# usage: check_mpi_split.sh HEARTHRAY MPIEXEC SOURCE_DIR SCRATCH_DIR
set -u
tool=$1 mpiexec=$2 source=$3 scratch=$4
if [ -z "$mpiexec" ] || ! command -v "$mpiexec" >/dev/null 2>&1; then
  echo "skipped: no MPI launcher (Debian: openmpi-bin, libopenmpi-dev; scripts/setup)"
  exit 77
fi
rm -rf "$scratch" && mkdir -p "$scratch" && cd "$scratch" || exit 1
mpirun() { "$mpiexec" -np 2 --allow-run-as-root --oversubscribe --bind-to none "$@"; }
failures=0
fail() { echo "FAIL: $*"; failures=$((failures + 1)); }
# A tool built without MPI runs the whole command in each of the two processes.
probe=$(mpirun "$tool" --version 2>&1)
if [ "$(echo "$probe" | grep -c hearthray)" != 1 ]; then
  echo "skipped: the tool was built without MPI (HEARTHRAY_MPI off or no libopenmpi-dev)"
  exit 77
fi

# Files of two folders byte for byte; the JSON files without their timing lines.
same_files() {
  for f in "$1"/*; do
    name=$(basename "$f")
    case "$name" in
      *.json)
        grep -v -E '"(seconds|trace_seconds|rays_per_second|threads)"' "$f" >"$f.cmp"
        grep -v -E '"(seconds|trace_seconds|rays_per_second|threads)"' "$2/$name" >"$2/$name.cmp"
        cmp "$f.cmp" "$2/$name.cmp" || fail "$name differs between $1 and $2" ;;
      *.cmp) ;;
      *) cmp "$f" "$2/$name" || fail "$name differs between $1 and $2" ;;
    esac
  done
}

# solve: 430 patches (> 200: view_factors.h5), the Sobol' sampler.
kiln=$source/scenes/electric-kiln/kiln-patches.toml
"$tool" solve "$kiln" --rays 300 --no-cache -q -o one >one.log 2>&1 || fail "one process: exit $?"
mpirun "$tool" solve "$kiln" --rays 300 --no-cache -q -o two >two.log 2>&1 ||
  fail "mpirun -np 2: exit $?"
[ -f two/view_factors.h5 ] || fail "mpirun -np 2 wrote no view_factors.h5"
same_files one two
[ "$(ls one | grep -v '\.cmp$')" = "$(ls two | grep -v '\.cmp$')" ] || fail "different file lists"

# factors: raw, the stratified sampler, Matrix Market and HDF5.
for n in 1 2; do
  mkdir -p f$n
  run=""
  [ $n = 2 ] && run=mpirun
  $run "$tool" factors "$kiln" --rays 200 --raw --sampler stratified --no-cache -q \
    -o f$n/F.mtx -o f$n/F.h5 >f$n.log 2>&1 || fail "factors on $n processes: exit $?"
done
same_files f1 f2

# Bad input: every process exits 2, one message.
mpirun "$tool" solve no-such-scene.toml -q >bad.log 2>&1
status=$?
[ $status = 2 ] || fail "bad input under mpirun: exit $status, expected 2"
[ "$(grep -c '^error:' bad.log)" = 1 ] || fail "bad input: expected one error line, got: $(cat bad.log)"

# The cache: process 0 stores it, then reads it while the helper waits and ends with it.
mpirun "$tool" solve "$kiln" --rays 300 --cache cache -q -o stored >stored.log 2>&1 ||
  fail "storing the cache: exit $?"
[ "$(ls cache | wc -l)" -ge 1 ] || fail "no cache file written"
mpirun "$tool" solve "$kiln" --rays 300 --cache cache -q -o hit >hit.log 2>&1 ||
  fail "reading the cache: exit $?"
same_files stored hit  # report.json names the cache file

if [ $failures -gt 0 ]; then
  echo "$failures failure(s); logs in $scratch"
  exit 1
fi
echo "mpirun -np 2: files byte-identical to one process (solve and factors), bad input exit 2, cache hit"
