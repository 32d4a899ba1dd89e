#!/bin/sh
# ctest splits a test name at a semicolon (a CMake list separator) and then runs nothing under
# it while reporting a pass: fail if any test executable has such a name.
for exe in "$@"; do
  if "$exe" --list-test-names-only | grep -n "$(printf '\073')"; then
    echo "test names above contain a semicolon: ctest would run nothing for them" >&2
    exit 1
  fi
done
