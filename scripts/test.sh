#!/usr/bin/env bash
# npm test: install dependencies when missing, then run everything against throw-away services.
set -euo pipefail
cd "$(dirname "$0")/.."
if [ ! -d node_modules ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
  npm ci --no-audit --no-fund
fi
exec node --import tsx scripts/test.ts "$@"
