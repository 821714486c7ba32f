#!/usr/bin/env bash
# Shared helpers for the start/stop/test scripts. Source, do not execute.
set -euo pipefail

ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)"
DATA_DIR="$ROOT/.data"
RUN_DIR="$DATA_DIR/run"
LOG_DIR="$DATA_DIR/logs"

export NEXT_TELEMETRY_DISABLED=1

# Project ports (all services bind to 127.0.0.1).
PG_PORT="${HOLONOMY_PG_PORT:-54329}"
PG_USER="holonomy"
PG_PASSWORD="holonomy"

log() { printf '[holonomy] %s\n' "$*" >&2; }
die() { printf '[holonomy] error: %s\n' "$*" >&2; exit 1; }

as_root() {
  if [ "$(id -u)" -eq 0 ]; then "$@"; elif command -v sudo >/dev/null 2>&1; then sudo "$@"; else die "need root to run: $*"; fi
}

apt_install() {
  log "installing Debian packages: $*"
  as_root env DEBIAN_FRONTEND=noninteractive apt-get update -qq
  as_root env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "$@" >/dev/null
}

# Installs npm dependencies when node_modules is missing (fresh clone).
ensure_node_modules() {
  if [ ! -d "$ROOT/node_modules" ] || [ ! -x "$ROOT/node_modules/.bin/next" ]; then
    log "installing npm dependencies"
    (cd "$ROOT" && if [ -f package-lock.json ]; then npm ci --no-audit --no-fund; else npm install --no-audit --no-fund; fi)
  fi
}

# Debian's chromium for Playwright; never a downloaded browser.
ensure_chromium() {
  if [ ! -x /usr/bin/chromium ]; then
    apt_install chromium
  fi
  [ -x /usr/bin/chromium ] || die "chromium is missing after install"
}

# Waits until a TCP port on 127.0.0.1 accepts connections.
wait_for_port() {
  local port="$1" label="$2" tries="${3:-60}"
  for _ in $(seq 1 "$tries"); do
    if (exec 3<>"/dev/tcp/127.0.0.1/$port") 2>/dev/null; then return 0; fi
    sleep 0.5
  done
  die "$label did not open port $port"
}

port_open() { (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null; }

pid_alive() { [ -n "${1:-}" ] && kill -0 "$1" 2>/dev/null; }

# The production builds the demo and the browser suite serve refuse the committed
# development NEXTAUTH_SECRET (lib/env.ts). Unless one is set already, generate a
# random secret once into .data/nextauth-secret (git-ignored, mode 600) and export it.
ensure_nextauth_secret() {
  if [ -n "${NEXTAUTH_SECRET:-}" ]; then export NEXTAUTH_SECRET; return 0; fi
  local file="$DATA_DIR/nextauth-secret"
  if [ ! -s "$file" ]; then
    mkdir -p "$DATA_DIR"
    (umask 077 && node -e "process.stdout.write(require('node:crypto').randomBytes(32).toString('base64url'))" >"$file")
  fi
  chmod 600 "$file"
  NEXTAUTH_SECRET="$(cat "$file")"
  export NEXTAUTH_SECRET
}

# The collaboration server (server/collab.ts), one node process on 127.0.0.1:PORT beside
# Next.js, logging to .data/logs/collab-PORT.log. Sets COLLAB_PID; stop_collab_server
# stops exactly that process (SIGTERM: it writes its documents first).
start_collab_server() {
  local port="$1"
  if port_open "$port"; then die "port $port (collaboration server) is already in use; stop the other server first"; fi
  mkdir -p "$LOG_DIR"
  COLLAB_PORT="$port" node --conditions=react-server --import tsx "$ROOT/server/collab.ts" >>"$LOG_DIR/collab-$port.log" 2>&1 &
  COLLAB_PID=$!
  wait_for_port "$port" "the collaboration server" 120
}

stop_collab_server() {
  if pid_alive "${COLLAB_PID:-}"; then
    kill -TERM "$COLLAB_PID" 2>/dev/null || true
    wait "$COLLAB_PID" 2>/dev/null || true
  fi
  COLLAB_PID=""
}
