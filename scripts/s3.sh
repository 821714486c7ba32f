#!/usr/bin/env bash
# The fake S3 server (s3rver from npm) that stands in for object storage.
#   scripts/s3.sh start [PORT BUCKET]   default 4568 / holonomy
#   scripts/s3.sh stop  [PORT]
# Binds to 127.0.0.1; objects live in .data/s3-PORT (git-ignored). The bucket
# is created at start. Credentials are s3rver's fixed pair (S3RVER / S3RVER),
# the defaults in lib/env.ts.
source "$(dirname "${BASH_SOURCE[0]}")/lib/common.sh"

S3_PORT="${2:-4568}"
S3_BUCKET="${3:-holonomy}"
PID_FILE="$RUN_DIR/s3rver-$S3_PORT.pid"
S3_LOG="$LOG_DIR/s3rver-$S3_PORT.log"

start() {
  mkdir -p "$RUN_DIR" "$LOG_DIR" "$DATA_DIR/s3-$S3_PORT"
  if [ -f "$PID_FILE" ] && pid_alive "$(cat "$PID_FILE")"; then
    log "S3 fake already running (127.0.0.1:$S3_PORT)"
    return 0
  fi
  rm -f "$PID_FILE"
  if port_open "$S3_PORT"; then die "port $S3_PORT is taken by another process"; fi
  log "starting S3 fake (127.0.0.1:$S3_PORT, bucket $S3_BUCKET)"
  # Started directly (no subshell) so $! is the server's own pid.
  nohup node "$ROOT/node_modules/s3rver/bin/s3rver.js" \
    --directory "$DATA_DIR/s3-$S3_PORT" --address 127.0.0.1 --port "$S3_PORT" --silent \
    --no-vhost-buckets --configure-bucket "$S3_BUCKET" \
    >"$S3_LOG" 2>&1 &
  echo $! >"$PID_FILE"
  wait_for_port "$S3_PORT" "S3 fake"
}

stop() {
  if [ -f "$PID_FILE" ]; then
    local pid; pid=$(cat "$PID_FILE")
    if pid_alive "$pid"; then log "stopping S3 fake (pid $pid)"; kill "$pid"; fi
    rm -f "$PID_FILE"
  else
    log "S3 fake (port $S3_PORT) is not running"
  fi
}

case "${1:-}" in
  start) start ;;
  stop) stop ;;
  *) echo "usage: scripts/s3.sh start|stop [PORT BUCKET]" >&2; exit 2 ;;
esac
