#!/usr/bin/env bash
# `npm run demo:reset`: stops everything, wipes the dev data (.data/dev: database, files, mail) and starts afresh
# with the demo data. .env is kept.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/stop.sh
echo "Wiping .data/dev"
rm -rf .data/dev
exec bash scripts/start.sh
