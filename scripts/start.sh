#!/usr/bin/env bash
# npm start: install dependencies when missing, then bring everything up on loopback.
set -euo pipefail
cd "$(dirname "$0")/.."
if [ ! -d node_modules ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
  echo "[heightlight] installing dependencies (npm ci) ..."
  npm ci --no-audit --no-fund
fi
exec node --import tsx scripts/start.ts
