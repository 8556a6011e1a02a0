#!/usr/bin/env bash
# `npm stop`: stops the web server and worker started by `npm start` (if running), then the dev services.
set -euo pipefail
cd "$(dirname "$0")/.."
RUN_DIR=.data/dev/run
# shellcheck source=scripts/process-group.sh
source scripts/process-group.sh

stop_pidfile() {
  local name=$1 marker=$2 file="$RUN_DIR/$1.pid" pid
  pid=$(cat "$file" 2>/dev/null || true)
  if [ -z "$pid" ] || ! [ -r "/proc/$pid/cmdline" ] || ! tr '\0' ' ' <"/proc/$pid/cmdline" | grep -q -- "$marker"; then
    echo "$name: not running"
    rm -f "$file"
    return 0
  fi
  # start.sh runs each in its own process group (pid = group id): stop the whole group.
  if stop_group "$pid" 150; then
    echo "$name: stopped (pid $pid)"
  else
    echo "$name: did not stop within 15 s; killed (pid $pid)"
  fi
  rm -f "$file"
}

stop_pidfile worker worker
stop_pidfile app next
exec node_modules/.bin/tsx scripts/services.ts stop --instance dev
