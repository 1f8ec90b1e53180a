#!/usr/bin/env bash
# Installs the Debian packages that building and testing foothold need.
#
#   bash scripts/setup.sh            build and test packages (scripts/packages.txt)
#   bash scripts/setup.sh --bench    also the benchmark packages (scripts/packages-bench.txt)
#   bash scripts/setup.sh --list     print the package names and exit
#
# Idempotent: asks dpkg which packages are missing and runs `apt-get update` (once) and
# `apt-get install` only for those. Prints nothing when everything is already there.
# Without root it installs nothing and says which command to run.
set -euo pipefail

script_dir="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
lists=("${script_dir}/packages.txt")
list_only=0

usage() {
  sed -n '2,10s/^# \{0,1\}//p' "${BASH_SOURCE[0]}"
}

for arg in "$@"; do
  case "${arg}" in
    --bench) lists+=("${script_dir}/packages-bench.txt") ;;
    --list) list_only=1 ;;
    -h | --help) usage; exit 0 ;;
    *) echo "setup.sh: unknown option '${arg}'" >&2; usage >&2; exit 2 ;;
  esac
done

# One package a line; '#' starts a comment; blank lines are ignored.
read_packages() {
  sed -e 's/#.*//' -e 's/[[:space:]]*$//' -e 's/^[[:space:]]*//' "$@" | grep -v '^$' || true
}

mapfile -t packages < <(read_packages "${lists[@]}")
if [[ ${#packages[@]} -eq 0 ]]; then
  echo "setup.sh: no packages listed in ${lists[*]}" >&2
  exit 1
fi

if [[ ${list_only} -eq 1 ]]; then
  printf '%s\n' "${packages[@]}"
  exit 0
fi

is_installed() {
  [[ "$(dpkg-query -W -f='${db:Status-Status}' "$1" 2>/dev/null)" == "installed" ]]
}

missing=()
for package in "${packages[@]}"; do
  is_installed "${package}" || missing+=("${package}")
done

if [[ ${#missing[@]} -eq 0 ]]; then
  exit 0
fi

if [[ ${EUID} -ne 0 ]]; then
  echo "setup.sh: missing Debian packages: ${missing[*]}" >&2
  echo "setup.sh: install them as root, then run this again:" >&2
  echo "  sudo apt-get update && sudo apt-get install -y --no-install-recommends ${missing[*]}" >&2
  exit 1
fi

echo "setup.sh: installing ${missing[*]}"
export DEBIAN_FRONTEND=noninteractive
apt-get update -qq
apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null

still_missing=()
for package in "${missing[@]}"; do
  is_installed "${package}" || still_missing+=("${package}")
done
if [[ ${#still_missing[@]} -ne 0 ]]; then
  echo "setup.sh: apt-get did not install: ${still_missing[*]}" >&2
  exit 1
fi
echo "setup.sh: done"
