#!/usr/bin/env bash
# `npm stop`: stops the web server and worker started by `npm start` (if running), then the dev services.
set -euo pipefail
cd "$(dirname "$0")/.."
RUN_DIR=.data/dev/run

stop_pidfile() {
  local name=$1 marker=$2 file="$RUN_DIR/$1.pid" pid
  pid=$(cat "$file" 2>/dev/null || true)
  if [ -z "$pid" ] || ! [ -r "/proc/$pid/cmdline" ] || ! tr '\0' ' ' <"/proc/$pid/cmdline" | grep -q -- "$marker"; then
    echo "$name: not running"
    rm -f "$file"
    return 0
  fi
  # start.sh runs each in its own process group (pid = group id): stop the whole group.
  kill -TERM -- "-$pid" 2>/dev/null || kill -TERM "$pid" 2>/dev/null || true
  for _ in $(seq 1 150); do
    if ! kill -0 "$pid" 2>/dev/null; then
      echo "$name: stopped (pid $pid)"
      rm -f "$file"
      return 0
    fi
    sleep 0.1
  done
  echo "$name: did not stop within 15 s; killing (pid $pid)"
  kill -KILL -- "-$pid" 2>/dev/null || kill -KILL "$pid" 2>/dev/null || true
  rm -f "$file"
}

stop_pidfile worker worker
stop_pidfile app next
exec node_modules/.bin/tsx scripts/services.ts stop --instance dev
