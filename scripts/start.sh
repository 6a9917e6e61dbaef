#!/usr/bin/env bash
# `npm start`: install what is missing, then hand over to scripts/start.ts (PostgreSQL, migrations,
# seeds, local fakes, dashboard build, gateway). Ctrl-C or SIGTERM stops everything it started.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/ensure-node-deps.sh
if [ -z "${DATABASE_URL:-}" ]; then
  bash scripts/ensure-apt.sh '/usr/lib/postgresql/*/bin/initdb=postgresql'
fi
exec node --import tsx scripts/start.ts "$@"
