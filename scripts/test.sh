#!/usr/bin/env bash
# Sets up a machine, builds foothold and runs the whole test suite.
#
#   bash scripts/test.sh                 everything
#   bash scripts/test.sh -L engine       extra arguments go to ctest (here: one layer)
#
# Release build in build/ at the repository root, or in $FOOTHOLD_BUILD_DIR when set
# (a relative path is taken from the repository root). Two jobs for the build and for
# ctest: the machines we run on have two cores. Exits non-zero when setup, configure,
# build or any test fails.
set -euo pipefail

repo_root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "${repo_root}"

build_dir="${FOOTHOLD_BUILD_DIR:-build}"
jobs="${FOOTHOLD_JOBS:-2}"
# ccache keys on the command line, which holds absolute paths; relative to the checkout,
# a fresh clone elsewhere (as CI makes) still hits the objects compiled before.
export CCACHE_BASEDIR="${CCACHE_BASEDIR:-${repo_root}}"

bash scripts/setup.sh

echo "== configure (${build_dir}, Release)"
cmake -S . -B "${build_dir}" -DCMAKE_BUILD_TYPE=Release -DFOOTHOLD_BUILD_TESTS=ON

# Keep going past a target that fails to compile, so that one broken test does not hide
# the results of all the others; the run still fails at the end.
keep_going=()
case "$(sed -n 's/^CMAKE_GENERATOR:INTERNAL=//p' "${build_dir}/CMakeCache.txt")" in
  "Unix Makefiles") keep_going=(-- -k) ;;
  Ninja) keep_going=(-- -k 0) ;;
esac
echo "== build (-j${jobs})"
build_status=0
cmake --build "${build_dir}" -j "${jobs}" "${keep_going[@]}" || build_status=$?

echo "== test"
cd "${build_dir}"
test_status=0
ctest --output-on-failure -j "${jobs}" "$@" || test_status=$?

if [[ ${build_status} -ne 0 ]]; then
  echo "test.sh: the build failed (status ${build_status}); the tests above ran on what built" >&2
  exit 1
fi
exit "${test_status}"
