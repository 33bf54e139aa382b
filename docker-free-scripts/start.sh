#!/usr/bin/env bash
# npm start — the whole product on this machine: dependencies, a project-local
# PostgreSQL cluster, migrations, the demo firm, the built app and a worker.
# Ctrl-C or SIGTERM stops the app, the worker and the database cleanly.
source "$(dirname "$0")/lib.sh"
cd "$ROOT"

DEV=0; [ "${1:-}" = "--dev" ] && DEV=1
export HOST="${HOST:-127.0.0.1}" PORT="${PORT:-3000}"
export AUTH_ORIGIN="${AUTH_ORIGIN:-http://$HOST:$PORT/api/auth}"
export TIEPOINT_PUBLIC_URL="${TIEPOINT_PUBLIC_URL:-http://$HOST:$PORT}"
export NITRO_HOST="$HOST" NITRO_PORT="$PORT"
PGPORT="${TIEPOINT_PG_PORT:-54329}"
started=$(date +%s)

ensure_node_modules
ensure_auth_secret
OWN_PG=0
if [ -z "${DATABASE_URL:-}" ]; then
  pg_up pg "$PGPORT"
  pg_database "$PGPORT" tiepoint
  OWN_PG=1
fi
migrate
npx tsx server/db/seed.ts

PIDS=()
cleanup() {
  trap - INT TERM EXIT
  log "stopping"
  for p in "${PIDS[@]}"; do kill -TERM -- "-$p" 2>/dev/null || kill -TERM "$p" 2>/dev/null || true; done
  for p in "${PIDS[@]}"; do wait "$p" 2>/dev/null || true; done
  [ "$OWN_PG" = 1 ] && pg_down pg
  exit 0
}
trap cleanup INT TERM EXIT

if [ "$DEV" = 1 ]; then
  setsid npx nuxt dev --host "$HOST" --port "$PORT" & PIDS+=($!)
else
  ensure_build
  setsid node .output/server/index.mjs & PIDS+=($!)
fi
if [ -f server/workers/run.ts ]; then
  setsid npx tsx server/workers/run.ts & PIDS+=($!)
fi

for _ in $(seq 1 120); do
  curl -fsS "http://$HOST:$PORT/api/health" >/dev/null 2>&1 && break
  sleep 0.5
done
log "Tiepoint is up at http://$HOST:$PORT  (ready in $(( $(date +%s) - started )) s)"
log "demo sign-ins (password: ${DEMO_PASSWORD:-tiepoint-demo}) — demo data only:"
log "  owner@tiepoint.test  chief@tiepoint.test  crew@tiepoint.test  surveyor@tiepoint.test  client@tiepoint.test  other@tiepoint.test"
log "press Ctrl-C to stop"
wait -n "${PIDS[@]}" || true
cleanup
