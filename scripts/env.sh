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
