#!/usr/bin/env bash
# Serves the production build (`npm run build` first) with its companions beside it:
#   scripts/start.sh [PORT]     (default 3000, bound to 127.0.0.1)
# - the collaboration server on 127.0.0.1:${COLLAB_PORT:-3001} (live co-editing);
# - one queue worker (scripts/worker.ts), which runs the server simulations and fits the
#   app queues; more workers, here or on other machines, share the same queue.
# Stopping any of them stops all.
source "$(dirname "${BASH_SOURCE[0]}")/lib/common.sh"
cd "$ROOT"
PORT="${1:-${PORT:-3000}}"
export COLLAB_PORT="${COLLAB_PORT:-3001}"

start_collab_server "$COLLAB_PORT"
node --conditions=react-server --import tsx scripts/worker.ts &
WORKER=$!
npx next start -H 127.0.0.1 -p "$PORT" &
APP=$!
stop_all() {
  kill "$APP" "$WORKER" 2>/dev/null || true
  wait "$APP" "$WORKER" 2>/dev/null || true
  stop_collab_server
}
trap stop_all EXIT
trap 'exit 143' INT TERM
# Whichever ends first ends the others (the trap).
wait -n "$APP" "$WORKER" "$COLLAB_PID"
