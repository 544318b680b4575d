#!/usr/bin/env bash
# npm start: install what is missing, start PostgreSQL and the local fakes, migrate, seed the demo,
# build and serve. Ctrl-C or SIGTERM stops everything it started.
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"

PORT="${PORT:-3000}"
export S3_PORT="${S3_PORT:-4569}" SMTP_PORT="${SMTP_PORT:-2525}"
export S3_ENDPOINT="${S3_ENDPOINT:-http://127.0.0.1:$S3_PORT}"
export APP_URL="${APP_URL:-http://127.0.0.1:$PORT}"
export NODE_ENV=production

# The demo (six accounts sharing a published password, an admin API token) goes only into the
# embedded database this command runs itself, and there only unless SUNSIFT_DEMO=0 is given. With
# DATABASE_URL (another PostgreSQL server) there is no demo unless SUNSIFT_DEMO=1 is given.
EMBEDDED_DB=0
if [ -z "${DATABASE_URL:-}" ]; then EMBEDDED_DB=1; export SUNSIFT_DEMO="${SUNSIFT_DEMO:-1}"; else export SUNSIFT_DEMO="${SUNSIFT_DEMO:-0}"; fi

# Ctrl-C or SIGTERM, once or many times, at any moment: every process this command started is
# ended and waited for, and then (last) PostgreSQL is stopped if this command started it.
DB_WAS_RUNNING=1
cleanup() {
  echo; echo "Stopping Sunsift…"
  stop_started
  if [ "$DB_WAS_RUNNING" = "0" ]; then stop_own_db; fi
  echo "Stopped."
}
on_stop cleanup

ensure_node_modules
ensure_secret
if [ "$EMBEDDED_DB" = "1" ]; then
  bash scripts/db.sh status >/dev/null 2>&1 || DB_WAS_RUNNING=0
  db_step start
  export DATABASE_URL="$(bash scripts/db.sh url)"
fi

PIDS=()
node node_modules/tsx/dist/cli.mjs scripts/fakes.ts &
PIDS+=($!)

echo "Migrating the database…"
step node node_modules/tsx/dist/cli.mjs scripts/migrate.ts
if [ "$SUNSIFT_DEMO" = "1" ]; then
  echo "Seeding the demo…"
  step node node_modules/tsx/dist/cli.mjs seeds/demo.ts
fi

if [ ! -f build/server/index.js ] || [ -n "$(find app -newer build/server/index.js -print -quit)" ]; then
  echo "Building…"
  step node node_modules/@react-router/dev/bin.js build >/dev/null
fi

node node_modules/tsx/dist/cli.mjs scripts/worker.ts &
PIDS+=($!)
HOST=127.0.0.1 PORT="$PORT" node scripts/serve.mjs ./build/server/index.js &
PIDS+=($!)

if wait_for_url "http://127.0.0.1:$PORT/healthz" 60; then
  if [ "$SUNSIFT_DEMO" != "1" ]; then
    printf '\n  Sunsift is running at http://127.0.0.1:%s (no demo)\n\n  Press Ctrl-C to stop.\n' "$PORT"
  else
  cat <<MSG

  Sunsift is running at http://127.0.0.1:$PORT

  Demo accounts (password: sunsift-demo)
    admin@sunsift.test     admin
    engineer@sunsift.test  performance engineer
    lead@sunsift.test      O&M lead
    pilot@sunsift.test     pilot
    tech@sunsift.test      technician
    owner@sunsift.test     owner
  Demo API token (admin scope): sunsift-demo-token

  Press Ctrl-C to stop.
MSG
  fi
else
  echo "The server did not answer on port $PORT." >&2
  exit 1
fi
wait -n "${PIDS[@]}"
