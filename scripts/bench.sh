#!/usr/bin/env bash
# npm run bench — Lobeline's speed and memory targets (PRODUCT.md N1–N6), measured here, never in timed tests.
# Each section is one entry of SECTIONS: a name and the command that prints its table. Other issues add N3–N5 by
# appending to the list. `npm run bench -- N2` runs only the named sections.
set -euo pipefail
cd "$(dirname "$0")/.."

# Without the app's .env (and no environment of its own) the sections that use the services cannot run: say what
# to do in one sentence instead of every section listing every missing variable.
if [ ! -f .env ] && [ -z "${DB_HOST:-}" ] && [ "${LOBELINE_INSTANCE:-}" != "test" ]; then
  echo "npm run bench needs the app's .env: run \`npm start\` once first (it writes .env and starts the local services), then run \`npm run bench\` again."
  exit 1
fi

SECTIONS=(
  "N1|npx tsx scripts/bench/n1-phase.ts"
  "N2|npx tsx scripts/bench/n2-angular.ts"
  "N3|npx tsx scripts/bench/n3-sha256.ts"
  "N4|npx tsx scripts/bench/n4-multipart.ts"
  "N3b|npx tsx scripts/bench/n3-browser-sha256.ts"
  "N5|npx tsx scripts/bench/n5-scan-table.ts"
  # event lists: conversion + histogramming per core (reduction/events)
  "EVENTS|npx tsx scripts/bench/events.ts"
  # event files from disk to a result: events/s and peak memory per size (reduction/hdf5/event-reader.ts)
  "EVENTS-FILE|npx tsx scripts/bench/events-file.ts"
  # one event file through the queue as chunk jobs: speed-up with 1, 2, 4 worker processes; peak RSS 10⁷ vs 10⁸
  "EVENTS-FLOW|npx tsx scripts/bench/events-flow.ts"
  # 20 signed-in HTTP clients on the running app (start the app and run N5 once first; see the script's header).
  "LOAD|npx tsx scripts/bench/load-app.ts"
  # precision of the lobe angles (several minutes; scripts/bench/precision.ts --realisations 10 for a quick look)
  "PRECISION|npx tsx scripts/bench/precision.ts"
  # model overlays of the comparison page: single trajectories computed and from the cache (issue 13)
  "MODELS|npx tsx scripts/bench/comparison-models.ts"
  # the same overlays answered from the MariaDB cache against computing them (needs the services: `npm start`)
  "MODELS-CACHE|npx tsx scripts/bench/model-cache.ts"
  # calibration bench (issue 15): control change → drawn frame in Chromium, and a 20-scan trial in its worker
  "BENCH|npx tsx scripts/bench/bench-latency.ts"
)

want=("$@")
status=0
for entry in "${SECTIONS[@]}"; do
  name="${entry%%|*}"
  cmd="${entry#*|}"
  if [ "${#want[@]}" -gt 0 ] && [[ ! " ${want[*]} " =~ " ${name} " ]]; then continue; fi
  echo "== ${name} =="
  if ! eval "$cmd"; then
    echo "  (section ${name} failed)"
    status=1
  fi
  echo
done

echo "== machine =="
echo "  nproc: $(nproc)"
echo "  cpu: $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2- | sed 's/^ *//')"
echo "  node: $(node --version)"
echo "  python: $(/usr/bin/python3 -c 'import sys, numpy, h5py; print(sys.version.split()[0], "numpy", numpy.__version__, "h5py", h5py.__version__)')"
exit $status
