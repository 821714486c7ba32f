#!/usr/bin/env bash
# The fake SMTP server (maildev from npm) that captures every message locally.
#   scripts/mail.sh start [SMTP_PORT WEB_PORT]   default 1025 / 1080
#   scripts/mail.sh stop  [SMTP_PORT WEB_PORT]
# Both ports bind to 127.0.0.1. The app reads captured mail via the web port's REST API.
source "$(dirname "${BASH_SOURCE[0]}")/lib/common.sh"

SMTP_PORT="${2:-1025}"
WEB_PORT="${3:-1080}"
PID_FILE="$RUN_DIR/maildev-$SMTP_PORT.pid"
MAIL_LOG="$LOG_DIR/maildev-$SMTP_PORT.log"

start() {
  mkdir -p "$RUN_DIR" "$LOG_DIR"
  if [ -f "$PID_FILE" ] && pid_alive "$(cat "$PID_FILE")"; then
    log "mail fake already running (smtp $SMTP_PORT, web $WEB_PORT)"
    return 0
  fi
  rm -f "$PID_FILE"
  if port_open "$SMTP_PORT" || port_open "$WEB_PORT"; then die "port $SMTP_PORT or $WEB_PORT is taken by another process"; fi
  log "starting mail fake (smtp 127.0.0.1:$SMTP_PORT, web 127.0.0.1:$WEB_PORT)"
  # Started directly (no subshell) so $! is the server's own pid.
  nohup node "$ROOT/node_modules/maildev/dist/bin/maildev.js" \
    --smtp "$SMTP_PORT" --web "$WEB_PORT" --ip 127.0.0.1 --web-ip 127.0.0.1 --mail-directory "$DATA_DIR/mail-$SMTP_PORT" \
    >"$MAIL_LOG" 2>&1 &
  echo $! >"$PID_FILE"
  wait_for_port "$SMTP_PORT" "mail fake (smtp)"
  wait_for_port "$WEB_PORT" "mail fake (web)"
}

stop() {
  if [ -f "$PID_FILE" ]; then
    local pid; pid=$(cat "$PID_FILE")
    if pid_alive "$pid"; then log "stopping mail fake (pid $pid)"; kill "$pid"; fi
    rm -f "$PID_FILE"
  else
    log "mail fake (smtp $SMTP_PORT) is not running"
  fi
}

case "${1:-}" in
  start) start ;;
  stop) stop ;;
  *) echo "usage: scripts/mail.sh start|stop [SMTP_PORT WEB_PORT]" >&2; exit 2 ;;
esac
