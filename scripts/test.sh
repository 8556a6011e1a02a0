#!/usr/bin/env bash
# `npm test` (and .ci/run): lint, type check, unit and integration tests against freshly started TEST services,
# then a production build served on 127.0.0.1:3100 with the worker, and the Playwright end-to-end tests.
# Always stops what it started. Exits non-zero if any phase failed. The last line is "N passed, N failed"
# (vitest + Playwright test counts).
set -uo pipefail
cd "$(dirname "$0")/.."
ROOT=$PWD
BIN=$ROOT/node_modules/.bin

# ---------- install (same steps as npm start) ----------
bash scripts/start.sh --install-only || {
  echo "Installing packages failed."
  echo "0 passed, 1 failed"
  exit 1
}

# ---------- the test environment (fixed values, never the dev ones) ----------
for v in APP_ORIGIN NEXTAUTH_URL NEXTAUTH_SECRET DB_HOST DB_PORT DB_NAME DB_USER DB_PASSWORD REDIS_URL SMTP_HOST \
  SMTP_PORT MAIL_FROM MAIL_CATCHER_DIR S3_ENDPOINT S3_REGION S3_ACCESS_KEY_ID S3_SECRET_ACCESS_KEY S3_FORCE_PATH_STYLE \
  S3_BUCKET_RAW S3_BUCKET_DERIVED S3_BUCKET_ARCHIVE LOG_LEVEL LOBELINE_INSTANCE TRUSTED_PROXY_HOPS; do
  unset "$v"
done
TEST_ENV=$("$BIN/tsx" scripts/services.ts env --instance test) || {
  echo "Could not compute the test environment."
  echo "0 passed, 1 failed"
  exit 1
}
eval "$TEST_ENV"
APP_PORT=3100
export NEXT_DIST_DIR=.next-test
APP_URL="http://127.0.0.1:$APP_PORT"
OUT=$ROOT/.data/test
REPORTS=$ROOT/.data/test-reports # outside .data/test, which --fresh wipes
rm -rf "$REPORTS"
mkdir -p "$REPORTS"

# ---------- phases ----------
T_START=$EPOCHREALTIME
PHASE_LINES=()
FAILED_PHASES=()
run_phase() {
  local name=$1
  shift
  printf '\n==> %s\n' "$name"
  local t0=$EPOCHREALTIME rc
  "$@"
  rc=$?
  local line
  line=$(awk -v a="$t0" -v b="$EPOCHREALTIME" -v n="$name" -v r="$rc" \
    'BEGIN { printf "  %-26s %7.1f s  %s", n, b - a, (r == 0 ? "ok" : "FAILED (exit " r ")") }')
  PHASE_LINES+=("$line")
  [ "$rc" -eq 0 ] || FAILED_PHASES+=("$name")
  return "$rc"
}
skip_phase() {
  PHASE_LINES+=("$(printf '  %-26s %9s  skipped (%s)' "$1" '' "$2")")
}

APP_PID=''
WORKER_PID=''
# shellcheck source=scripts/process-group.sh
source "$ROOT/scripts/process-group.sh"
cleanup() {
  trap - EXIT INT TERM
  echo
  echo "==> cleanup: stopping the test app, worker and services"
  stop_group "$WORKER_PID" || true
  stop_group "$APP_PID" || true
  "$BIN/tsx" scripts/services.ts stop --instance test || true
  summary
}
on_signal() {
  echo "Interrupted."
  FAILED_PHASES+=("interrupted")
  cleanup
  exit 130
}

count_tests() {
  node - "$REPORTS" <<'EOF'
const fs = require('node:fs');
const path = require('node:path');
const dir = process.argv[2];
let passed = 0;
let failed = 0;
const expected = (process.env.EXPECT_REPORTS || '').split(',').filter(Boolean);
for (const name of expected) {
  const file = path.join(dir, name);
  let j;
  try {
    j = JSON.parse(fs.readFileSync(file, 'utf8'));
  } catch {
    console.error(`  report ${name} missing or unreadable: counted as 1 failure`);
    failed += 1;
    continue;
  }
  if (name.startsWith('vitest')) {
    passed += j.numPassedTests ?? 0;
    failed += j.numFailedTests ?? 0;
    // A test file that failed without a failing test (import error, failing hook) counts once.
    for (const r of j.testResults ?? []) {
      const anyFailed = (r.assertionResults ?? []).some((a) => a.status === 'failed');
      if (r.status === 'failed' && !anyFailed) failed += 1;
    }
  } else {
    const s = j.stats ?? {};
    passed += (s.expected ?? 0) + (s.flaky ?? 0);
    failed += (s.unexpected ?? 0) + (j.errors ?? []).length;
  }
}
console.log(`${passed} passed, ${failed} failed`);
EOF
}
summary() {
  echo
  echo "Phases:"
  printf '%s\n' "${PHASE_LINES[@]}"
  awk -v a="$T_START" -v b="$EPOCHREALTIME" 'BEGIN { printf "  %-26s %7.1f s\n", "total", b - a }'
  if [ ${#FAILED_PHASES[@]} -gt 0 ]; then
    echo "Failed phases: ${FAILED_PHASES[*]}"
  fi
  local line
  line=$(EXPECT_REPORTS="$(
    IFS=,
    echo "${EXPECT_REPORTS[*]}"
  )" count_tests)
  echo "$line"
  case "$line" in
  *", 0 failed") ;;
  *) COUNT_FAILED=1 ;;
  esac
}
COUNT_FAILED=0
EXPECT_REPORTS=()
trap cleanup EXIT
trap on_signal INT TERM

vitest_project() {
  local project=$1
  EXPECT_REPORTS+=("vitest-$project.json")
  "$BIN/vitest" run --project "$project" --passWithNoTests \
    --reporter=default --reporter=json --outputFile.json="$REPORTS/vitest-$project.json"
}

wait_for_app() {
  for _ in $(seq 1 120); do
    if node -e "fetch(process.argv[1]).then((r) => process.exit(r.ok ? 0 : 1), () => process.exit(1))" "$APP_URL/api/ping"; then
      echo "App answers on $APP_URL"
      return 0
    fi
    kill -0 "$APP_PID" 2>/dev/null || break
    sleep 0.5
  done
  echo "The app did not answer on $APP_URL/api/ping; last lines of its log:"
  tail -n 30 "$OUT/logs/app.log" 2>/dev/null
  return 1
}

start_app() {
  if node -e "const s=require('node:net').connect($APP_PORT,'127.0.0.1');s.on('connect',()=>process.exit(0));s.on('error',()=>process.exit(1))"; then
    echo "Port $APP_PORT is already in use; cannot start the test app."
    return 1
  fi
  mkdir -p "$OUT/logs"
  set -m
  "$BIN/tsx" scripts/serve.ts -H 127.0.0.1 -p "$APP_PORT" >"$OUT/logs/app.log" 2>&1 &
  APP_PID=$!
  if [ -f scripts/worker.ts ]; then
    "$BIN/tsx" scripts/worker.ts >"$OUT/logs/worker.log" 2>&1 &
    WORKER_PID=$!
  fi
  set +m
  wait_for_app
}

build_app() {
  # The test build goes to its own folder so that it never replaces a running dev build.
  "$BIN/next" build
}

e2e() {
  EXPECT_REPORTS+=("playwright.json")
  rm -f "$OUT/playwright.json"
  "$BIN/playwright" test # reporters (list + json to .data/test/playwright.json) come from playwright.config.ts
  local rc=$?
  cp "$OUT/playwright.json" "$REPORTS/playwright.json" 2>/dev/null
  return $rc
}

run_phase "lint + format (biome)" "$BIN/biome" check .
run_phase "typecheck (tsc)" "$BIN/tsc" --noEmit -p tsconfig.json
services_ok=0
if run_phase "services --fresh" bash -c '"$0" scripts/services.ts start --instance test --fresh && "$0" scripts/services.ts wait --instance test' "$BIN/tsx"; then
  services_ok=1
fi
if [ $services_ok -eq 1 ]; then
  run_phase "migrate" "$BIN/tsx" scripts/migrate.ts up || services_ok=0
else
  skip_phase "migrate" "services failed"
fi
# The demo seed gives the browser tests their demo sign-ins; integration tests make their own data beside it.
if [ $services_ok -eq 1 ] && [ -f scripts/seed.ts ]; then
  run_phase "seed (demo data)" "$BIN/tsx" scripts/seed.ts || services_ok=0
fi
run_phase "unit tests" vitest_project unit
if [ $services_ok -eq 1 ]; then
  run_phase "integration tests" vitest_project integration
else
  EXPECT_REPORTS+=("vitest-integration.json")
  skip_phase "integration tests" "services or migrations failed"
fi

shopt -s nullglob
SPECS=(tests/e2e/*.spec.ts tests/e2e/**/*.spec.ts)
shopt -u nullglob
if run_phase "build (next build)" build_app; then
  if [ $services_ok -eq 1 ] && run_phase "app + worker start" start_app; then
    if [ ${#SPECS[@]} -gt 0 ]; then
      run_phase "e2e (playwright)" e2e
    else
      skip_phase "e2e (playwright)" "no tests/e2e/*.spec.ts"
    fi
  else
    [ ${#SPECS[@]} -gt 0 ] && EXPECT_REPORTS+=("playwright.json")
    skip_phase "e2e (playwright)" "app not running"
  fi
else
  [ ${#SPECS[@]} -gt 0 ] && EXPECT_REPORTS+=("playwright.json")
  skip_phase "e2e (playwright)" "build failed"
fi

cleanup
if [ ${#FAILED_PHASES[@]} -gt 0 ] || [ "$COUNT_FAILED" -ne 0 ]; then
  exit 1
fi
exit 0
