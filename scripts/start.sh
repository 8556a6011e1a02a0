#!/usr/bin/env bash
# `npm start`: from a fresh Debian 12 machine with Node 20 to a running Lobeline at http://127.0.0.1:3000.
#   1. installs missing Debian packages (MariaDB, Redis, Chromium, numpy/h5py/scipy for reference checks)
#   2. `npm ci` when node_modules is missing or older than package-lock.json
#   3. creates .env (from .env.example + minio.env.example, with generated secrets) if it does not exist
#   4. starts the dev services (scripts/services.ts), migrates, seeds the demo data
#   5. builds the app (skipped when the build is newer than every source) and runs the web server and the worker
#      in the foreground. Ctrl-C stops both; the services keep running (`npm stop` stops everything).
#   6. adds the demo scan files once (scripts/demo-scans.ts; LOBELINE_DEMO_SCANS=0 skips it) and waits for the
#      worker to reduce them.
# `bash scripts/start.sh --install-only` does steps 1–2 only (scripts/test.sh uses it).
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$PWD
MODE=${1:-run}
BIN=$ROOT/node_modules/.bin

# ---------- timing of the phases ----------
PHASE_LINES=()
PHASE_NAME=''
PHASE_T0=''
T_START=$EPOCHREALTIME
phase() {
  phase_done
  PHASE_NAME=$1
  PHASE_T0=$EPOCHREALTIME
  printf '\n==> %s\n' "$PHASE_NAME"
}
phase_done() {
  if [ -n "$PHASE_NAME" ]; then
    PHASE_LINES+=("$(awk -v a="$PHASE_T0" -v b="$EPOCHREALTIME" -v n="$PHASE_NAME" 'BEGIN { printf "  %-34s %7.1f s", n, b - a }')")
    PHASE_NAME=''
  fi
}
print_phases() {
  phase_done
  echo "Start-up phases:"
  printf '%s\n' "${PHASE_LINES[@]}"
  awk -v a="$T_START" -v b="$EPOCHREALTIME" 'BEGIN { printf "  %-34s %7.1f s\n", "total", b - a }'
}

# ---------- 1. Debian packages ----------
DEB_PACKAGES=(mariadb-server mariadb-client redis-server chromium python3-h5py python3-numpy python3-scipy libxml2-utils)
install_packages() {
  local missing=() p
  for p in "${DEB_PACKAGES[@]}"; do
    dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q 'install ok installed' || missing+=("$p")
  done
  if [ ${#missing[@]} -eq 0 ]; then
    echo "All Debian packages present."
    return 0
  fi
  echo "Installing Debian packages: ${missing[*]}"
  local sudo=()
  if [ "$(id -u)" -ne 0 ]; then
    if ! command -v sudo >/dev/null; then
      echo "ERROR: need root or sudo to install: ${missing[*]}" >&2
      exit 1
    fi
    sudo=(sudo)
  fi
  # Keep the packages' own init scripts from starting system-wide MariaDB/Redis instances during installation
  # (Lobeline runs its own on other ports); the usual policy-rc.d convention, removed again afterwards.
  local policy_added=0
  if [ ! -e /usr/sbin/policy-rc.d ]; then
    "${sudo[@]}" sh -c 'printf "#!/bin/sh\nexit 101\n" > /usr/sbin/policy-rc.d && chmod 755 /usr/sbin/policy-rc.d'
    policy_added=1
  fi
  local rc=0
  "${sudo[@]}" env DEBIAN_FRONTEND=noninteractive apt-get update || rc=$?
  if [ $rc -eq 0 ]; then
    "${sudo[@]}" env DEBIAN_FRONTEND=noninteractive apt-get install -y "${missing[@]}" || rc=$?
  fi
  if [ $policy_added -eq 1 ]; then "${sudo[@]}" rm -f /usr/sbin/policy-rc.d; fi
  if [ $rc -ne 0 ]; then
    echo "ERROR: apt-get failed (exit $rc) while installing: ${missing[*]}" >&2
    exit $rc
  fi
}

# ---------- 2. npm packages ----------
install_node_modules() {
  if [ ! -d node_modules ] || [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
    echo "Running npm ci"
    npm ci --no-audit --no-fund
  else
    echo "node_modules is up to date with package-lock.json."
  fi
}

phase "Debian packages"
install_packages
phase "npm packages"
install_node_modules
if [ "$MODE" = "--install-only" ]; then
  print_phases
  exit 0
fi

# ---------- 3. .env ----------
phase ".env"
gen_secret() { node -e "process.stdout.write(require('node:crypto').randomBytes(Number(process.argv[1])).toString('base64url'))" "$1"; }
if [ ! -f .env ]; then
  { cat .env.example; echo; cat minio.env.example; } |
    sed -e "s|^NEXTAUTH_SECRET=\$|NEXTAUTH_SECRET=$(gen_secret 48)|" \
      -e "s|^DB_PASSWORD=\$|DB_PASSWORD=$(gen_secret 24)|" \
      -e "s|^S3_SECRET_ACCESS_KEY=\$|S3_SECRET_ACCESS_KEY=$(gen_secret 30)|" >.env
  chmod 600 .env
  echo "Created .env with generated secrets (edit it to use another database, S3 or mail server)."
else
  echo "Using the existing .env."
fi
set -a
# shellcheck disable=SC1091
. ./.env
set +a
export LOBELINE_INSTANCE=dev NEXT_TELEMETRY_DISABLED=1
APP_PORT=3000
APP_URL="http://127.0.0.1:$APP_PORT"
RUN_DIR=$ROOT/.data/dev/run
mkdir -p "$RUN_DIR"

http_ok() { node -e "fetch(process.argv[1]).then((r) => process.exit(r.ok ? 0 : 1), () => process.exit(1))" "$1"; }
pid_is() { [ -n "${1:-}" ] && [ -r "/proc/$1/cmdline" ] && tr '\0' ' ' <"/proc/$1/cmdline" | grep -q -- "$2"; }

if pid_is "$(cat "$RUN_DIR/app.pid" 2>/dev/null)" next && http_ok "$APP_URL/api/ping"; then
  echo "Lobeline is already running at $APP_URL (pid $(cat "$RUN_DIR/app.pid")). \`npm stop\` stops it."
  exit 0
fi
if http_ok "$APP_URL/api/ping" || node -e "const s=require('node:net').connect($APP_PORT,'127.0.0.1');s.on('connect',()=>process.exit(0));s.on('error',()=>process.exit(1))"; then
  echo "ERROR: port $APP_PORT on 127.0.0.1 is taken by another program; stop it first." >&2
  exit 1
fi

# ---------- 4. services, schema, demo data ----------
phase "services (MariaDB, Redis, S3, SMTP)"
"$BIN/tsx" scripts/services.ts start --instance dev
"$BIN/tsx" scripts/services.ts wait --instance dev --timeout 60

phase "migrations"
"$BIN/tsx" scripts/migrate.ts up

SEED_OUT=$ROOT/.data/dev/seed-output.txt
if [ -f scripts/seed.ts ]; then
  phase "demo data (seed)"
  "$BIN/tsx" scripts/seed.ts 2>&1 | tee "$SEED_OUT"
else
  rm -f "$SEED_OUT"
fi

# ---------- 5. build and run ----------
needs_build() {
  [ "${LOBELINE_FORCE_BUILD:-0}" = 1 ] && return 0
  [ -f .next/BUILD_ID ] || return 0
  [ "$(cat .next/lobeline-instance 2>/dev/null)" = dev ] || return 0
  [ -n "$(find app components lib models reduction public proxy.ts next.config.mjs tailwind.config.ts \
    postcss.config.mjs tsconfig.json package-lock.json .env -newer .next/BUILD_ID -print -quit 2>/dev/null)" ]
}
phase "build (next build)"
if needs_build; then
  "$BIN/next" build
  echo dev >.next/lobeline-instance
else
  echo "The build in .next is newer than every source; not rebuilding (LOBELINE_FORCE_BUILD=1 forces it)."
fi

phase "web server and worker ready"
APP_PID=''
WORKER_PID=''
# shellcheck source=scripts/process-group.sh
source "$ROOT/scripts/process-group.sh"
cleanup() {
  trap - INT TERM EXIT
  echo
  echo "Stopping the web server and the worker (the services keep running; \`npm stop\` stops them too)."
  stop_group "$WORKER_PID" || true
  stop_group "$APP_PID" || true
  rm -f "$RUN_DIR/app.pid" "$RUN_DIR/worker.pid"
}
trap 'cleanup; exit 130' INT TERM
trap cleanup EXIT

# Each in its own process group, so stopping takes its children along.
set -m
"$BIN/tsx" scripts/serve.ts -H 127.0.0.1 -p "$APP_PORT" &
APP_PID=$!
if [ -f scripts/worker.ts ]; then
  "$BIN/tsx" scripts/worker.ts &
  WORKER_PID=$!
fi
set +m
echo "$APP_PID" >"$RUN_DIR/app.pid"
[ -n "$WORKER_PID" ] && echo "$WORKER_PID" >"$RUN_DIR/worker.pid"

ready=0
for _ in $(seq 1 120); do
  if http_ok "$APP_URL/api/ping"; then
    ready=1
    break
  fi
  kill -0 "$APP_PID" 2>/dev/null || break
  sleep 0.5
done
if [ $ready -ne 1 ]; then
  echo "ERROR: the web server did not answer on $APP_URL/api/ping within 60 s." >&2
  exit 1
fi

# Demo scan files (dev instance only; idempotent): generated, uploaded through the ingest and reduced by the worker.
DEMO_OUT=$ROOT/.data/dev/demo-scans-output.txt
rm -f "$DEMO_OUT"
if [ -f scripts/demo-scans.ts ] && [ -s "$SEED_OUT" ] && [ -n "$WORKER_PID" ] && [ "${LOBELINE_DEMO_SCANS:-1}" != 0 ]; then
  phase "demo scans (upload, reduce)"
  if ! "$BIN/tsx" scripts/demo-scans.ts 2>&1 | tee "$DEMO_OUT"; then
    echo "WARNING: the demo scans could not all be added (see above); Lobeline runs anyway." >&2
  fi
  "$BIN/tsx" scripts/demo-events.ts 2>&1 | tee -a "$DEMO_OUT" || echo "WARNING: the demo event campaign could not be added." >&2
  [ -f scripts/demo-comparison.ts ] && { "$BIN/tsx" scripts/demo-comparison.ts || echo "WARNING: no demo comparison was kept." >&2; }
  [ -f scripts/demo-neon.ts ] && { "$BIN/tsx" scripts/demo-neon.ts 2>&1 | tee -a "$DEMO_OUT" || echo "WARNING: the demo neon campaigns could not all be added." >&2; }
fi

[ -f scripts/demo-citation.ts ] && [ -s "$SEED_OUT" ] && { "$BIN/tsx" scripts/demo-citation.ts || echo "WARNING: demo citation data not added." >&2; }
[ -f scripts/demo-landing.ts ] && [ -s "$SEED_OUT" ] && { "$BIN/tsx" scripts/demo-landing.ts || echo "WARNING: no demo public page." >&2; }
[ -f scripts/demo-fixity.ts ] && [ -s "$SEED_OUT" ] && { "$BIN/tsx" scripts/demo-fixity.ts || echo "WARNING: the demo fixity file was not planted." >&2; }

echo
print_phases
echo
echo "Lobeline is running at $APP_URL"
if [ -s "$SEED_OUT" ]; then
  grep -iE 'sign|password|@' "$SEED_OUT" || true
fi
[ -z "$WORKER_PID" ] && echo "(No scripts/worker.ts yet: the reduction worker was not started.)"
[ -s "${DEMO_OUT:-}" ] && grep -E '^demo scans:' "$DEMO_OUT" | tail -n 1 || true
[ -s "${DEMO_OUT:-}" ] && grep -E '^demo neon:' "$DEMO_OUT" | tail -n 1 | sed "s|/comparisons/|$APP_URL/comparisons/|" || true
echo "Mail sent by the app is kept in ${MAIL_CATCHER_DIR:-.data/dev/mail}. Press Ctrl-C to stop the web server and worker."

set +e
if [ -n "$WORKER_PID" ]; then
  wait -n "$APP_PID" "$WORKER_PID"
else
  wait "$APP_PID"
fi
code=$?
echo "The web server or the worker exited (code $code)."
exit "$code"
