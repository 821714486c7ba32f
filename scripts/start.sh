#!/usr/bin/env bash
# `npm start`: serves the production build on 127.0.0.1:3000 with the collaboration server on
# 127.0.0.1:${COLLAB_PORT:-3001} beside it. Ctrl-C stops both.
source "$(dirname "${BASH_SOURCE[0]}")/lib/common.sh"
cd "$ROOT"
export COLLAB_PORT="${COLLAB_PORT:-3001}"
start_collab_server "$COLLAB_PORT"
trap stop_collab_server EXIT
trap 'exit 130' INT TERM
npx next start -H 127.0.0.1 -p 3000
