#!/usr/bin/env bash
# Installs the npm dependencies when node_modules is missing or older than package-lock.json.
# Sourced by start.sh and test.sh; runs nothing else.
set -euo pipefail
if [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
  echo "[fermiwell] installing npm dependencies (npm ci)…"
  npm ci --no-audit --no-fund
fi
