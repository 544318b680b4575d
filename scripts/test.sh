#!/usr/bin/env bash
# npm test: typecheck, then every test (unit, integration on the real PostgreSQL, browser in
# headless Chromium). Starts what the tests need on ports of their own and stops it after.
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"

# Ctrl-C or SIGTERM, once or many times, at any moment: every process this command started is
# ended and waited for, and then (last) PostgreSQL is stopped if this command started it.
DB_WAS_RUNNING=1
cleanup() {
  stop_started
  if [ "$DB_WAS_RUNNING" = "0" ]; then
    stop_own_db
    # A throwaway clone in the temp folder keeps its cluster outside itself (/var/tmp, where the
    # postgres user may enter): remove it with the run, as the clone will be.
    local pgdata; pgdata="$(env -u DATABASE_URL bash scripts/db.sh path)"
    case "$PWD" in "${TMPDIR:-/tmp}"/*) case "$pgdata" in "$PWD"/*) ;; *) rm -rf "$pgdata" "$pgdata.log" ;; esac ;; esac
  fi
}
on_stop cleanup

ensure_node_modules
if ! command -v chromium >/dev/null 2>&1; then
  echo "Installing Chromium from Debian's packages (for the browser tests)…"
  apt-get update -qq >/dev/null && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium >/dev/null
fi

echo "== typecheck"
node node_modules/@react-router/dev/bin.js typegen >/dev/null 2>&1
if [ "${SKIP_TYPECHECK:-}" = "1" ]; then echo "(skipped: SKIP_TYPECHECK=1, for iterating on one file only)"; else step node node_modules/typescript/bin/tsc; fi

if [ -z "${DATABASE_URL:-}" ]; then
  bash scripts/db.sh status >/dev/null 2>&1 || DB_WAS_RUNNING=0
  db_step start
  BASE_URL="$(bash scripts/db.sh url)"
  export DATABASE_URL="${BASE_URL%/*}/sunsift_test${TEST_SLOT:-}"
fi

export NODE_ENV=production
# The tests use the demo accounts and the demo outbox on their own database (the non-demo behaviour
# is checked by tests/integration/plain-server.test.ts, which starts a second server without it).
export SUNSIFT_DEMO=1
# TEST_SLOT=N gives a parallel run its own database, ports and build (engineers working side by side).
SLOT="${TEST_SLOT:-0}"
export TEST_PORT="${TEST_PORT:-$((3100 + SLOT * 10))}"
export PORT="$TEST_PORT"
export APP_URL="http://127.0.0.1:$TEST_PORT"
export S3_PORT="$((4579 + SLOT * 10))" SMTP_PORT="$((2535 + SLOT * 10))"
export S3_ENDPOINT="http://127.0.0.1:$S3_PORT" S3_DIR="$ROOT/.data/s3-test$SLOT"
export SESSION_SECRET="test-secret-test-secret-test-secret-0123"
export TEST_OUTPUT="$ROOT/test-output${TEST_SLOT:+/slot$SLOT}"
export BUILD_DIR="build${TEST_SLOT:+-test$SLOT}"
mkdir -p "$TEST_OUTPUT"

echo "== build"
step node node_modules/@react-router/dev/bin.js build >/dev/null 2>&1 || step node node_modules/@react-router/dev/bin.js build

echo "== fresh test database"
step node node_modules/tsx/dist/cli.mjs scripts/reset-db.ts
step node node_modules/tsx/dist/cli.mjs scripts/migrate.ts
step node node_modules/tsx/dist/cli.mjs seeds/demo.ts --demo --accounts-only

rm -rf "$S3_DIR"
# The tests start their own SMTP fake (to read what arrives); the object store runs here.
node node_modules/tsx/dist/cli.mjs scripts/fakes.ts --s3-only > "$TEST_OUTPUT/fakes.log" 2>&1 &
node node_modules/tsx/dist/cli.mjs scripts/worker.ts > "$TEST_OUTPUT/worker.log" 2>&1 &
HOST=127.0.0.1 TRUST_PROXY=1 node scripts/serve.mjs "./$BUILD_DIR/server/index.js" > "$TEST_OUTPUT/server.log" 2>&1 &
# The web server's process id, for tests that watch its memory (tests/integration/body-limits.test.ts).
export SERVER_PID=$!
wait_for_url "$APP_URL/healthz" 60 || { echo "test server did not start"; cat "$TEST_OUTPUT/server.log"; exit 1; }

echo "== tests"
STATUS=0
step node node_modules/vitest/vitest.mjs run --reporter=default --reporter=json --outputFile.json="$TEST_OUTPUT/vitest.json" "$@" || STATUS=$?
# One plain closing line that any CI reader understands.
node -e 'const r=require(process.argv[1]);console.log(`${r.numPassedTests} passed, ${r.numFailedTests + (r.numFailedTests ? 0 : r.numFailedTestSuites || 0)} failed`)' "$TEST_OUTPUT/vitest.json" 2>/dev/null || true
exit $STATUS
