# Shared by start.sh, test.sh and the benchmarks: install what is missing, and the environment.
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$ROOT"
mkdir -p .data

ensure_node_modules() {
  local stamp=".data/npm-ci.sha"
  local want; want="$(sha256sum package-lock.json | cut -d' ' -f1)"
  if [ ! -d node_modules ] || [ ! -f "$stamp" ] || [ "$(cat "$stamp")" != "$want" ]; then
    echo "Installing npm packages (npm ci)…"
    npm ci --include=dev --no-audit --no-fund --loglevel=error
    echo "$want" > "$stamp"
  fi
}

ensure_secret() {
  if [ -z "${SESSION_SECRET:-}" ]; then
    if [ ! -f .data/session-secret ]; then
      node -e 'process.stdout.write(require("crypto").randomBytes(32).toString("base64url"))' > .data/session-secret
      chmod 600 .data/session-secret
    fi
    SESSION_SECRET="$(cat .data/session-secret)"
    export SESSION_SECRET
  fi
}

wait_for_url() { # url seconds
  local i=0
  until curl -fsS -o /dev/null "$1" 2>/dev/null; do
    i=$((i + 1))
    if [ "$i" -gt $(( $2 * 5 )) ]; then return 1; fi
    sleep 0.2
  done
}

# Stopping what a script started, whatever signal arrives and however often. A terminal's Ctrl-C
# reaches the whole process group and npm forwards it once more, so signals come in twos and
# threes. A script calls `on_stop FUNCTION` before it starts anything: on INT, TERM or its end the
# function runs once, with INT and TERM ignored from then on (by the commands it runs too), and
# the script exits. Long steps run with `step` (or `db_step`), so that a signal reaches the trap
# at once rather than after the step has finished.
STOP_FN=""
STOPPING=0
DB_STEP_PID=""
on_stop() {
  STOP_FN="$1"
  trap 'stop_now 130' INT
  trap 'stop_now 143' TERM
  trap 'stop_now $?' EXIT
}
stop_now() {
  local status="$1"
  trap '' INT TERM
  if [ "$STOPPING" = "0" ]; then
    STOPPING=1
    set +e
    "$STOP_FN"
  fi
  trap - EXIT
  exit "$status"
}

# A command in the background, waited for (bash runs a trap only once a foreground command ends).
step() {
  local status=0 pid
  "$@" &
  pid=$!
  wait "$pid" || status=$?
  return "$status"
}

# scripts/db.sh with INT and TERM ignored, so that it is never cut off half-way (a cluster started
# but not yet known to be): stop_started waits for it to finish before stopping anything.
db_step() {
  local status=0
  (trap '' INT TERM; exec bash scripts/db.sh "$@") &
  DB_STEP_PID=$!
  wait "$DB_STEP_PID" || status=$?
  DB_STEP_PID=""
  return "$status"
}

# Every process below this shell, by parent id (nothing is looked up by name). Pure bash: reading
# /proc starts no process that would itself be listed. The answer is in DESCENDANTS.
own_descendants() {
  local -A parent=()
  local f pid k v p q
  for f in /proc/[0-9]*/status; do
    pid="${f#/proc/}"; pid="${pid%/status}"
    while read -r k v; do
      if [ "$k" = "PPid:" ]; then parent[$pid]="$v"; break; fi
    done 2>/dev/null < "$f" || true
  done
  DESCENDANTS=()
  local queue=("$$")
  while [ "${#queue[@]}" -gt 0 ]; do
    p="${queue[0]}"; queue=("${queue[@]:1}")
    for q in "${!parent[@]}"; do
      if [ "${parent[$q]}" = "$p" ]; then DESCENDANTS+=("$q"); queue+=("$q"); fi
    done
  done
}

# Whether a process exists and is not a zombie (one reparented to an init that does not reap).
is_alive() {
  local k v
  while read -r k v; do
    if [ "$k" = "State:" ]; then [ "${v:0:1}" != "Z" ]; return; fi
  done 2>/dev/null < "/proc/$1/status"
  return 1
}

# Ends everything this script started and waits for it: a db.sh step first runs to its end, then
# SIGTERM to every process below this shell, SIGKILL to any left after 15 s.
stop_started() {
  local i p alive
  if [ -n "$DB_STEP_PID" ]; then wait "$DB_STEP_PID" 2>/dev/null; DB_STEP_PID=""; fi
  own_descendants
  [ "${#DESCENDANTS[@]}" -gt 0 ] || return 0
  kill -TERM "${DESCENDANTS[@]}" 2>/dev/null
  for i in $(seq 1 150); do
    alive=()
    for p in "${DESCENDANTS[@]}"; do
      if is_alive "$p"; then alive+=("$p"); fi
    done
    [ "${#alive[@]}" -gt 0 ] || break
    sleep 0.1
  done
  if [ "${#alive[@]}" -gt 0 ]; then kill -KILL "${alive[@]}" 2>/dev/null; fi
  # Reap the direct children, so none is left a zombie for the caller to see.
  wait 2>/dev/null
}

# Stops the project's own cluster, to the end (pg_ctl -m fast -w), and checks that it is down.
stop_own_db() {
  local i
  for i in 1 2 3; do
    env -u DATABASE_URL bash scripts/db.sh stop
    env -u DATABASE_URL bash scripts/db.sh status >/dev/null 2>&1 || return 0
    sleep 1
  done
  echo "PostgreSQL ($(env -u DATABASE_URL bash scripts/db.sh path)) did not stop." >&2
  return 1
}
