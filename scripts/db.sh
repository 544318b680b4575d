#!/usr/bin/env bash
# Sunsift's own PostgreSQL: a cluster in .data/pg, run as the postgres user, TCP on 127.0.0.1 only.
# Usage: scripts/db.sh start|stop|status|psql|url|path|ensure-db NAME
# DATABASE_URL set in the environment means an external server: start/stop then do nothing.
set -euo pipefail
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
PGDATA_DEFAULTED=0
if [ -z "${PGDATA:-}" ]; then PGDATA_DEFAULTED=1; fi
choose_pgdata() {
  [ "$PGDATA_DEFAULTED" = "1" ] || return 0
  PGDATA="$ROOT/.data/pg"
  # The server runs as the postgres user, who may not be allowed into the project's folder (a
  # clone under a private temp directory, say): then the cluster lives in /var/tmp, one per checkout.
  if [ "$(id -u)" = "0" ] && id postgres >/dev/null 2>&1 && ! (cd / && runuser -u postgres -- test -x "$ROOT"); then
    PGDATA="/var/tmp/sunsift-pg-$(echo "$ROOT" | md5sum | cut -c1-10)"
  fi
  LOG="$(dirname "$PGDATA")/$(basename "$PGDATA").log"
}
choose_pgdata
PGPORT="${PGPORT:-54329}"
PGUSER_APP="app"
DBNAME="${PGDATABASE:-sunsift}"
LOG="$(dirname "$PGDATA")/$(basename "$PGDATA").log"

find_bin() {
  ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -1
}

ensure_installed() {
  BIN="$(find_bin || true)"
  if [ -z "$BIN" ]; then
    if [ "$(id -u)" != "0" ]; then
      echo "PostgreSQL is not installed and this is not root: install the Debian package 'postgresql' or set DATABASE_URL." >&2
      exit 1
    fi
    echo "Installing PostgreSQL from Debian's packages…"
    apt-get update -qq >/dev/null
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq postgresql >/dev/null
    BIN="$(find_bin)"
  fi
}

as_pg() {
  # The postgres user may not be able to enter the project folder: run from /.
  if [ "$(id -u)" = "0" ]; then (cd / && runuser -u postgres -- "$@"); else "$@"; fi
}

is_running() {
  [ -f "$PGDATA/postmaster.pid" ] || return 1
  local pid; pid="$(head -1 "$PGDATA/postmaster.pid" 2>/dev/null || true)"
  [ -n "$pid" ] && kill -0 "$pid" 2>/dev/null || return 1
  "$BIN/pg_isready" -q -h 127.0.0.1 -p "$PGPORT" >/dev/null 2>&1
}

init_cluster() {
  mkdir -p "$(dirname "$PGDATA")"
  if [ "$(id -u)" = "0" ]; then
    mkdir -p "$PGDATA"; chown postgres:postgres "$PGDATA"; chmod 700 "$PGDATA"
    touch "$LOG"; chown postgres:postgres "$LOG"
    if ! runuser -u postgres -- test -x "$PGDATA"; then
      echo "The postgres user cannot enter $PGDATA (a parent folder is closed). Set PGDATA to a folder it can reach, e.g. PGDATA=/var/tmp/sunsift-pg." >&2
      exit 1
    fi
  fi
  as_pg "$BIN/initdb" -D "$PGDATA" -U "$PGUSER_APP" --auth=trust -E UTF8 --locale=C.UTF-8 >/dev/null
  cat >> "$PGDATA/postgresql.conf" <<CONF
listen_addresses = '127.0.0.1'
port = $PGPORT
unix_socket_directories = ''
max_connections = 200
shared_buffers = 256MB
max_wal_size = 4GB
CONF
}

start() {
  if [ -n "${DATABASE_URL:-}" ]; then return 0; fi
  ensure_installed
  choose_pgdata
  if [ ! -f "$PGDATA/PG_VERSION" ]; then init_cluster; fi
  if is_running; then return 0; fi
  if [ "$(id -u)" = "0" ]; then touch "$LOG"; chown postgres:postgres "$LOG"; fi
  as_pg "$BIN/pg_ctl" -D "$PGDATA" -l "$LOG" -w -t 60 start >/dev/null || { echo "PostgreSQL did not start; see $LOG" >&2; tail -20 "$LOG" >&2; exit 1; }
  ensure_db "$DBNAME"
}

ensure_db() {
  local name="$1"
  if ! "$BIN/psql" -h 127.0.0.1 -p "$PGPORT" -U "$PGUSER_APP" -d postgres -tAc "select 1 from pg_database where datname='$name'" | grep -q 1; then
    "$BIN/createdb" -h 127.0.0.1 -p "$PGPORT" -U "$PGUSER_APP" "$name"
  fi
}

stop() {
  if [ -n "${DATABASE_URL:-}" ]; then return 0; fi
  BIN="$(find_bin || true)"; [ -n "$BIN" ] || return 0
  if [ -f "$PGDATA/postmaster.pid" ]; then as_pg "$BIN/pg_ctl" -D "$PGDATA" -m fast -w stop >/dev/null || true; fi
}

case "${1:-}" in
  start) start ;;
  stop) stop ;;
  status) BIN="$(find_bin || true)"; if [ -n "$BIN" ] && is_running; then echo "running on 127.0.0.1:$PGPORT ($PGDATA)"; else echo "stopped"; exit 3; fi ;;
  url) echo "${DATABASE_URL:-postgres://$PGUSER_APP@127.0.0.1:$PGPORT/$DBNAME}" ;;
  path) echo "$PGDATA" ;;
  psql) shift; ensure_installed; exec "$BIN/psql" "${DATABASE_URL:-postgres://$PGUSER_APP@127.0.0.1:$PGPORT/$DBNAME}" "$@" ;;
  ensure-db) ensure_installed; ensure_db "$2" ;;
  *) echo "usage: $0 start|stop|status|url|path|psql|ensure-db NAME" >&2; exit 2 ;;
esac
