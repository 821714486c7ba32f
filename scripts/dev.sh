#!/usr/bin/env bash
# `npm run dev`: services + migrations, the collaboration server on 127.0.0.1:3001, then the
# Next.js dev server on 127.0.0.1:3000. Ctrl-C stops both (the services keep running).
source "$(dirname "${BASH_SOURCE[0]}")/lib/common.sh"
cd "$ROOT"
ensure_node_modules
bash scripts/db.sh start
bash scripts/mail.sh start 1025 1080
bash scripts/s3.sh start 4568 holonomy
npx tsx scripts/migrate.ts
export COLLAB_PORT="${COLLAB_PORT:-3001}"
start_collab_server "$COLLAB_PORT"
# One queue worker for server simulations and fits; both stop with the dev server.
node --conditions=react-server --import tsx scripts/worker.ts &
WORKER=$!
trap 'kill "$WORKER" 2>/dev/null || true; stop_collab_server' EXIT
trap 'exit 130' INT TERM
npx next dev -H 127.0.0.1 -p 3000
