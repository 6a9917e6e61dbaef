#!/usr/bin/env bash
# Installs Debian packages the project needs when they are missing.
# Usage: scripts/ensure-apt.sh <check-path>=<package> ...
# Each argument names a file that the package provides; the package is installed only if the file
# is absent. `apt-get update` runs at most once per call, and only when something must be installed.
set -euo pipefail
missing=()
for pair in "$@"; do
  path=${pair%%=*}; pkg=${pair#*=}
  # a path may be a glob (e.g. the PostgreSQL major version directory)
  if ! compgen -G "$path" >/dev/null; then missing+=("$pkg"); fi
done
[ ${#missing[@]} -eq 0 ] && exit 0
if [ "$(id -u)" -ne 0 ]; then
  echo "[fermiwell] missing Debian packages: ${missing[*]} — install them with: sudo apt-get install ${missing[*]}" >&2
  exit 1
fi
echo "[fermiwell] installing Debian packages: ${missing[*]}"
export DEBIAN_FRONTEND=noninteractive
apt-get update -qq
apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
