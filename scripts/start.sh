#!/usr/bin/env bash
# Serves the production build (`npm run build` first) with one queue worker beside it:
#   scripts/start.sh [PORT]     (default 3000, bound to 127.0.0.1)
# The worker (scripts/worker.ts) runs the server simulations and fits the app queues;
# more workers, here or on other machines, share the same queue. Stopping either
# process stops both.
source "$(dirname "${BASH_SOURCE[0]}")/lib/common.sh"
cd "$ROOT"
PORT="${1:-${PORT:-3000}}"

node --conditions=react-server --import tsx scripts/worker.ts &
WORKER=$!
npx next start -H 127.0.0.1 -p "$PORT" &
APP=$!
stop_both() {
  kill "$APP" "$WORKER" 2>/dev/null || true
  wait "$APP" "$WORKER" 2>/dev/null || true
}
trap stop_both EXIT
trap 'exit 143' INT TERM
# Whichever ends first ends the other (the trap).
wait -n "$APP" "$WORKER"
