#!/usr/bin/env bash
# Installs the npm dependencies when node_modules is missing or older than package-lock.json, then
# compiles the WebAssembly table loop when its source changed (scripts/build-wasm.ts; skipped otherwise).
# Run by start.sh and test.sh (and `npm run bench` runs the compile step).
set -euo pipefail
if [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
  echo "[fermiwell] installing npm dependencies (npm ci)…"
  npm ci --no-audit --no-fund
fi
node --import tsx scripts/build-wasm.ts
