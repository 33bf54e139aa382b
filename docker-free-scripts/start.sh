#!/usr/bin/env bash
# npm start — the whole product on this machine: dependencies, a project-local
# PostgreSQL cluster, migrations, the demo firm, the built app and a worker.
#
# Supervision: the app and the worker each run in their own process group; one
# that dies is logged and started again after a back-off (1 s, doubling to
# 30 s; back to 1 s once it has run for a minute), and the rest keep running.
# Ctrl-C or SIGTERM stops the app, the worker and the database: the stop runs
# once, with further signals ignored, so a second Ctrl-C or the signal npm
# forwards cannot cut it short before PostgreSQL is stopped.
#
# Env: HOST, PORT, DATABASE_URL (another database: no local cluster, no demo
# seed unless TIEPOINT_SEED_DEMO=1), TIEPOINT_PG_PORT, TIEPOINT_PG_CLUSTER
# (the cluster's folder name under .data, default 'pg'), TIEPOINT_RUN_DIR
# (where app.pid and worker.pid are written, default .data/run-$PORT).
source "$(dirname "$0")/lib.sh"
cd "$ROOT"

DEV=0; [ "${1:-}" = "--dev" ] && DEV=1
export HOST="${HOST:-127.0.0.1}" PORT="${PORT:-3000}"
export AUTH_ORIGIN="${AUTH_ORIGIN:-http://$HOST:$PORT/api/auth}"
export TIEPOINT_PUBLIC_URL="${TIEPOINT_PUBLIC_URL:-http://$HOST:$PORT}"
export NITRO_HOST="$HOST" NITRO_PORT="$PORT"
PGPORT="${TIEPOINT_PG_PORT:-54329}"
PG_CLUSTER="${TIEPOINT_PG_CLUSTER:-pg}"
OUT="${NUXT_OUTPUT_DIR:-.output}"
RUN_DIR="${TIEPOINT_RUN_DIR:-$ROOT/.data/run-$PORT}"
started=$(date +%s)

OWN_PG=0
STOPPING=0
declare -A PID=() BORN=() DELAY=()

stop_group() { # stop_group PID SIGNAL — the child's process group, else the child
  kill "-$2" -- "-$1" 2>/dev/null || kill "-$2" "$1" 2>/dev/null || true
}

cleanup() {
  local rc="${1:-0}"
  [ "$STOPPING" = 1 ] && return 0
  STOPPING=1
  trap '' INT TERM
  trap - EXIT
  log "stopping"
  local n p
  for n in "${!PID[@]}"; do stop_group "${PID[$n]}" TERM; done
  # The worker finishes its current step; after 25 s whatever is left is killed.
  for _ in $(seq 1 50); do
    p=0; for n in "${!PID[@]}"; do kill -0 "${PID[$n]}" 2>/dev/null && p=1; done
    [ "$p" = 0 ] && break
    sleep 0.5
  done
  for n in "${!PID[@]}"; do stop_group "${PID[$n]}" KILL; wait "${PID[$n]}" 2>/dev/null || true; done
  rm -f "$RUN_DIR"/*.pid
  [ "$OWN_PG" = 1 ] && pg_down "$PG_CLUSTER"
  log "stopped"
  exit "$rc"
}
trap 'cleanup 0' INT TERM
trap 'cleanup $?' EXIT

ensure_node_modules
ensure_auth_secret
if [ -z "${DATABASE_URL:-}" ]; then
  OWN_PG=1
  pg_up "$PG_CLUSTER" "$PGPORT"
  pg_database "$PGPORT" tiepoint
fi
migrate
if [ "$OWN_PG" = 1 ] || [ "${TIEPOINT_SEED_DEMO:-}" = 1 ]; then
  TIEPOINT_SEED_DEMO=1 npx tsx server/db/seed.ts
else
  log "not seeding the demo firm: DATABASE_URL is not the project's own cluster (TIEPOINT_SEED_DEMO=1 seeds it anyway)"
fi
[ "$DEV" = 1 ] || ensure_build
mkdir -p "$RUN_DIR"

spawn() { # spawn NAME — start one supervised child in its own process group
  case "$1" in
    app)
      if [ "$DEV" = 1 ]; then setsid npx nuxt dev --host "$HOST" --port "$PORT" &
      else setsid node "$OUT/server/index.mjs" & fi ;;
    worker) setsid node --import tsx server/workers/run.ts & ;;
  esac
  PID[$1]=$!
  BORN[$1]=$(date +%s)
  echo "${PID[$1]}" > "$RUN_DIR/$1.pid"
}

CHILDREN=(app)
[ -f server/workers/run.ts ] && CHILDREN+=(worker)
for n in "${CHILDREN[@]}"; do DELAY[$n]=1; spawn "$n"; done

for _ in $(seq 1 120); do
  curl -fsS "http://$HOST:$PORT/api/health" >/dev/null 2>&1 && break
  sleep 0.5
done
log "Tiepoint is up at http://$HOST:$PORT  (ready in $(( $(date +%s) - started )) s)"
if [ "$OWN_PG" = 1 ] || [ "${TIEPOINT_SEED_DEMO:-}" = 1 ]; then
  log "demo sign-ins (password: ${DEMO_PASSWORD:-tiepoint-demo}) — demo data only:"
  log "  owner@tiepoint.test  chief@tiepoint.test  crew@tiepoint.test  surveyor@tiepoint.test  client@tiepoint.test  other@tiepoint.test"
fi
log "press Ctrl-C to stop"

# Supervise: a child that exited is started again after its back-off.
while :; do
  for n in "${CHILDREN[@]}"; do
    kill -0 "${PID[$n]}" 2>/dev/null && continue
    rc=0; wait "${PID[$n]}" 2>/dev/null || rc=$?
    ran=$(( $(date +%s) - BORN[$n] ))
    [ "$ran" -ge 60 ] && DELAY[$n]=1
    log "$n (pid ${PID[$n]}) exited with status $rc after ${ran} s; starting it again in ${DELAY[$n]} s"
    sleep "${DELAY[$n]}" & wait $! || true
    spawn "$n"
    log "$n started again (pid ${PID[$n]})"
    DELAY[$n]=$(( DELAY[$n] * 2 > 30 ? 30 : DELAY[$n] * 2 ))
  done
  sleep 1 & wait $! || true
done
