#!/usr/bin/env bash
# Sets up a machine, builds foothold and fits every demo dataset, printing each result.
#
#   bash scripts/demo.sh            a table per dataset
#   bash scripts/demo.sh --json     extra arguments go to every `foothold fit` (here: JSON)
#
# The datasets and how to fit them are listed in docs/examples/manifest.tsv (written by
# scripts/generate_demo_data.py with the data). Builds in build/ at the repository root,
# or in $FOOTHOLD_BUILD_DIR when set. Exits non-zero when a fit could not be run or did
# not converge (the demo data are made to converge from the manifest's starts).
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

# Prints the command as a person would type it: plain words bare, the rest in quotes.
show_command() {
  local line='$ foothold' arg
  for arg in "$@"; do
    if [[ "${arg}" =~ ^[A-Za-z0-9_./:=,+-]+$ ]]; then
      line+=" ${arg}"
    else
      line+=" '${arg//\'/\'\\\'\'}'"
    fi
  done
  echo "${line}"
}

num_fits=0
failed=()
not_converged=()
# Columns: file family peaks expression parameters start bounds sigma_column title;
# '-' marks an empty field (tabs are whitespace to `read`, so empty fields would vanish).
while IFS=$'\t' read -r file family peaks expression parameters start bounds sigma_column title; do
  [[ -z "${file}" || "${file}" == \#* || "${file}" == "file" ]] && continue
  args=(fit "${examples}/${file}")
  if [[ "${family}" != "-" ]]; then
    args+=(--family "${family}")
    [[ "${peaks}" != "-" ]] && args+=(--peaks "${peaks}")
  else
    args+=(--expr "${expression}" --params "${parameters}")
  fi
  [[ "${start}" != "-" ]] && args+=(--start "${start}")
  [[ "${bounds}" != "-" ]] && args+=(--bounds "${bounds}")
  [[ "${sigma_column}" != "-" ]] && args+=(--sigma-column "${sigma_column}")
  args+=("$@")

  num_fits=$((num_fits + 1))
  echo
  echo "=== ${title} (${file})"
  show_command "${args[@]}"
  status=0
  "${foothold}" "${args[@]}" </dev/null || status=$?
  case "${status}" in
    0) ;;
    3) not_converged+=("${file}") ;;  # the fit ran and says it did not converge
    *) failed+=("${file}") ;;
  esac
done <"${manifest}"

echo
if [[ ${num_fits} -eq 0 ]]; then
  echo "demo.sh: ${manifest} lists no datasets" >&2
  exit 1
fi
if [[ ${#failed[@]} -ne 0 || ${#not_converged[@]} -ne 0 ]]; then
  echo "demo: ${num_fits} datasets; could not run: ${failed[*]:-none};" \
    "did not converge: ${not_converged[*]:-none}" >&2
  exit 1
fi
echo "demo: all ${num_fits} fits ran (true values: ${examples}/truth.tsv)"
