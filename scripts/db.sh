#!/usr/bin/env bash
# PostgreSQL for development and tests: a private cluster under .data/pg, owned by
# the postgres user, listening on 127.0.0.1:$PG_PORT.
#   scripts/db.sh start            install (if needed), init, start; create databases
#   scripts/db.sh stop             stop the cluster
#   scripts/db.sh status           exit 0 when running
#   scripts/db.sh recreate NAME    drop and create database NAME (used for fresh test runs)
# Idempotent: a second start is a no-op, a stale postmaster.pid is removed.
source "$(dirname "${BASH_SOURCE[0]}")/lib/common.sh"

PG_DATA="$DATA_DIR/pg"
PG_SOCKET="$RUN_DIR/pg"
PG_LOG="$LOG_DIR/postgres.log"
DATABASES=(holonomy holonomy_test)

find_pg_bin() {
  local dir
  dir=$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1 || true)
  if [ -n "$dir" ] && [ -x "$dir/initdb" ]; then echo "$dir"; fi
}

ensure_pg_installed() {
  PG_BIN=$(find_pg_bin)
  if [ -z "$PG_BIN" ]; then
    apt_install postgresql
    PG_BIN=$(find_pg_bin)
    [ -n "$PG_BIN" ] || die "PostgreSQL binaries not found after installing the postgresql package"
  fi
}

# The server refuses to run as root, so as root we run it as the postgres user.
if [ "$(id -u)" -eq 0 ]; then
  PG_OWNER="postgres"
  as_pg() { runuser -u postgres -- "$@"; }
else
  PG_OWNER="$(id -un)"
  as_pg() { "$@"; }
fi

# postgres must be able to traverse every folder down to .data (a mktemp'd clone
# folder is 0700). Grant o+x (search only, not read) where it is missing.
ensure_traversable() {
  [ "$(id -u)" -eq 0 ] || return 0
  local dir="$DATA_DIR"
  while [ "$dir" != "/" ]; do
    if ! runuser -u postgres -- test -x "$dir"; then
      log "granting search permission on $dir so the postgres user can reach its data"
      chmod o+x "$dir"
    fi
    dir=$(dirname "$dir")
  done
}

prepare_dirs() {
  mkdir -p "$DATA_DIR" "$RUN_DIR" "$LOG_DIR"
  ensure_traversable
  mkdir -p "$PG_DATA" "$PG_SOCKET"
  touch "$PG_LOG"
  if [ "$(id -u)" -eq 0 ]; then chown postgres: "$PG_DATA" "$PG_SOCKET" "$PG_LOG"; chmod 700 "$PG_DATA"; fi
}

pg_running() {
  [ -n "${PG_BIN:-}" ] || PG_BIN=$(find_pg_bin)
  [ -n "$PG_BIN" ] && [ -f "$PG_DATA/PG_VERSION" ] && as_pg "$PG_BIN/pg_ctl" -D "$PG_DATA" status >/dev/null 2>&1
}

psql_admin() {
  as_pg "$PG_BIN/psql" -h "$PG_SOCKET" -p "$PG_PORT" -U postgres -d postgres -v ON_ERROR_STOP=1 -qAt "$@"
}

create_role_and_databases() {
  if [ "$(psql_admin -c "SELECT 1 FROM pg_roles WHERE rolname='$PG_USER'")" != "1" ]; then
    psql_admin -c "CREATE ROLE $PG_USER LOGIN PASSWORD '$PG_PASSWORD' CREATEDB"
  fi
  local db
  for db in "${DATABASES[@]}"; do
    if [ "$(psql_admin -c "SELECT 1 FROM pg_database WHERE datname='$db'")" != "1" ]; then
      psql_admin -c "CREATE DATABASE $db OWNER $PG_USER"
    fi
  done
}

start() {
  ensure_pg_installed
  prepare_dirs
  if [ ! -f "$PG_DATA/PG_VERSION" ]; then
    log "initialising cluster in .data/pg"
    as_pg "$PG_BIN/initdb" -D "$PG_DATA" -U postgres --auth-local=trust --auth-host=scram-sha-256 -E UTF8 --locale=C.UTF-8 >/dev/null
  fi
  if pg_running; then
    log "PostgreSQL already running on 127.0.0.1:$PG_PORT"
  else
    if [ -f "$PG_DATA/postmaster.pid" ]; then
      log "removing stale postmaster.pid"
      rm -f "$PG_DATA/postmaster.pid"
    fi
    if port_open "$PG_PORT"; then die "port $PG_PORT is taken by another process; set HOLONOMY_PG_PORT"; fi
    log "starting PostgreSQL on 127.0.0.1:$PG_PORT"
    as_pg "$PG_BIN/pg_ctl" -D "$PG_DATA" -l "$PG_LOG" -w -t 60 \
      -o "-c listen_addresses=127.0.0.1 -p $PG_PORT -k $PG_SOCKET -c fsync=off -c synchronous_commit=off -c full_page_writes=off" start >/dev/null \
      || { tail -n 20 "$PG_LOG" >&2; die "PostgreSQL did not start"; }
  fi
  create_role_and_databases
}

stop() {
  PG_BIN=$(find_pg_bin)
  if pg_running; then
    log "stopping PostgreSQL"
    as_pg "$PG_BIN/pg_ctl" -D "$PG_DATA" -m fast -w stop >/dev/null
  else
    log "PostgreSQL is not running"
  fi
}

recreate() {
  local db="$1"
  pg_running || die "PostgreSQL is not running"
  psql_admin -c "DROP DATABASE IF EXISTS $db WITH (FORCE)"
  psql_admin -c "CREATE DATABASE $db OWNER $PG_USER"
}

case "${1:-}" in
  start) start ;;
  stop) stop ;;
  status) if pg_running; then echo "running on 127.0.0.1:$PG_PORT"; else echo "stopped"; exit 1; fi ;;
  recreate) [ -n "${2:-}" ] || die "usage: db.sh recreate NAME"; PG_BIN=$(find_pg_bin); recreate "$2" ;;
  *) echo "usage: scripts/db.sh start|stop|status|recreate NAME" >&2; exit 2 ;;
esac
