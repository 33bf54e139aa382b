#!/usr/bin/env bash
# npm run db:start | db:stop — the local development cluster on its own.
source "$(dirname "$0")/lib.sh"
PORT="${TIEPOINT_PG_PORT:-54329}"
case "${1:-}" in
  start) pg_up pg "$PORT"; pg_database "$PORT" tiepoint; migrate; log "database ready on 127.0.0.1:$PORT (owner role tiepoint, runtime role tiepoint_app; passwords in $(dirname "$PGDATA_DIR"))" ;;
  stop) pg_down pg; pg_down pg-test ;;
  *) die "usage: db.sh start|stop" ;;
esac
