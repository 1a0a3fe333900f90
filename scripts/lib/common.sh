# Paths and ports of the local services, shared by every script (DEVELOPERS.md, "Local services and ports").
# Sourced, not run.
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)"
DATA="$ROOT/.data"
# LOOPWRIGHT_PORT_OFFSET shifts every port at once, so two checkouts on one machine (say, two worktrees)
# can each run their services and tests side by side. Default 0: the ports of DEVELOPERS.md.
PORT_OFFSET="${LOOPWRIGHT_PORT_OFFSET:-0}"
PG_PORT=$((54329 + PORT_OFFSET))
PG_ROLE=loopwright
APP_HOST=127.0.0.1
APP_PORT=$((3000 + PORT_OFFSET))
TEST_APP_PORT=$((3199 + PORT_OFFSET))
SMTP_PORT=$((2525 + PORT_OFFSET))
MAIL_HTTP_PORT=$((2580 + PORT_OFFSET))
TEST_SMTP_PORT=$((2526 + PORT_OFFSET))
TEST_MAIL_HTTP_PORT=$((2581 + PORT_OFFSET))
# The local fake of S3-compatible object storage (scripts/object-store): one for the served app, one for the browser
# tests (the server tests' app has one of its own on the next port: tests/setup/app.ts).
OBJECT_STORE_PORT=$((4568 + PORT_OFFSET))
TEST_OBJECT_STORE_PORT=$((4569 + PORT_OFFSET))
OBJECT_STORE_BUCKET=loopwright
TEST_OBJECT_STORE_BUCKET=loopwright-test

say() { printf '%s\n' "$*"; }
die() { printf 'error: %s\n' "$*" >&2; exit 1; }

# .data holds secrets (files 0600); 0711 lets the postgres user pass through to its cluster without listing it.
ensure_data_dir() {
  mkdir -p "$DATA"
  chmod 711 "$DATA"
}

# A random hex secret, created once into .data/<name> and read back afterwards.
secret() {
  local file="$DATA/$1" bytes="${2:-32}"
  ensure_data_dir
  if [ ! -s "$file" ]; then
    (umask 077 && od -An -N"$bytes" -tx1 /dev/urandom | tr -d ' \n' >"$file")
  fi
  cat "$file"
}

# Wait until a URL answers, up to $2 seconds.
wait_for_url() {
  local url="$1" seconds="${2:-30}" i
  for ((i = 0; i < seconds * 5; i++)); do
    curl -fsS -o /dev/null --max-time 2 "$url" 2>/dev/null && return 0
    sleep 0.2
  done
  return 1
}
