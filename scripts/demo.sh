#!/usr/bin/env bash
# Sets up a machine, builds foothold and runs the main job on the embedded default: a
# daemon on a temporary local SQLite store, every demo dataset posted to it over HTTP,
# the results polled and printed as one summary table (`foothold demo`).
#
#   bash scripts/demo.sh                 the daemon demo
#   bash scripts/demo.sh --workers 2     extra arguments go to `foothold demo`
#
# The datasets and how to fit them are listed in docs/examples/manifest.tsv (written by
# scripts/generate_demo_data.py with the data). Builds in build/ at the repository root,
# or in $FOOTHOLD_BUILD_DIR when set. Exits non-zero when a fit could not be run or did
# not converge.
set -euo pipefail

repo_root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "${repo_root}"

build_dir="${FOOTHOLD_BUILD_DIR:-build}"
jobs="${FOOTHOLD_JOBS:-2}"
# ccache keys on the command line, which holds absolute paths; relative to the checkout,
# a fresh clone elsewhere (as CI makes) still hits the objects compiled before.
export CCACHE_BASEDIR="${CCACHE_BASEDIR:-${repo_root}}"
examples="docs/examples"
manifest="${examples}/manifest.tsv"

bash scripts/setup.sh

echo "== build foothold (${build_dir}, Release)" >&2
cmake -S . -B "${build_dir}" -DCMAKE_BUILD_TYPE=Release >/dev/null
cmake --build "${build_dir}" --target foothold -j "${jobs}" >/dev/null

foothold="${build_dir}/server/foothold"
if [[ ! -x "${foothold}" ]]; then
  foothold="$(find "${build_dir}" -type f -name foothold -perm -u+x -print -quit)"
fi
if [[ -z "${foothold}" || ! -x "${foothold}" ]]; then
  echo "demo.sh: the build finished but no foothold binary was found under ${build_dir}" >&2
  exit 1
fi

echo "== foothold demo: a daemon on a temporary store, the datasets of ${manifest} posted" >&2
exec "${foothold}" demo --examples "${examples}" "$@" </dev/null
