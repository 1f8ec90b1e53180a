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

echo "== build (-j${jobs})"
cmake --build "${build_dir}" -j "${jobs}"

echo "== test"
cd "${build_dir}"
ctest --output-on-failure -j "${jobs}" "$@"
