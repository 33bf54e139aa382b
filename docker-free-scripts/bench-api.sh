#!/usr/bin/env bash
# The benchmarks that need PostgreSQL: storing uploads (tests/bench/store.ts),
# a run through the API and the queue (tests/bench/api.ts), one 10,000-station
# run along the whole API path and its run page (tests/bench/big-run.ts) and
# 60 s of load by 50 signed-in people (tests/bench/load.ts).
# TIEPOINT_BENCH_ONLY=big-run (a name or several, space-separated) runs only those. Its own fresh
# database on the test cluster, the built app and a worker, like test.sh.
# Figures only.
source "$(dirname "$0")/lib.sh"
cd "$ROOT"
PGPORT="${TIEPOINT_TEST_PG_PORT:-54339}"
export TIEPOINT_TEST_APP_PORT="${TIEPOINT_BENCH_APP_PORT:-${TIEPOINT_TEST_APP_PORT:-3959}}"
export TIEPOINT_TEST_SMTP_PORT="${TIEPOINT_TEST_SMTP_PORT:-$((TIEPOINT_TEST_APP_PORT + 1000))}"
export AUTH_ORIGIN="http://127.0.0.1:$TIEPOINT_TEST_APP_PORT/api/auth"
export NUXT_OUTPUT_DIR="${NUXT_OUTPUT_DIR:-.output}"
ensure_node_modules
ensure_auth_secret
PG_EXTRA_OPTS="-c fsync=off -c synchronous_commit=off" pg_up pg-test "$PGPORT"
# the bench stops the test cluster it started, like npm test (a later npm test would find the port taken)
cleanup() { [ -n "${TIEPOINT_KEEP_TEST_DB:-}" ] || pg_down pg-test; }
trap cleanup EXIT
pg_database "$PGPORT" "${TIEPOINT_BENCH_DB:-tiepoint_bench}" fresh
migrate
ensure_build
npx tsx server/db/seed.ts
ONLY=" ${TIEPOINT_BENCH_ONLY:-store api big-run load} "
[[ "$ONLY" == *" store "* ]] && node --expose-gc --import tsx tests/bench/store.ts
[[ "$ONLY" == *" api "* ]] && node --import tsx tests/bench/api.ts
[[ "$ONLY" == *" big-run "* ]] && node --import tsx tests/bench/big-run.ts
[[ "$ONLY" == *" load "* ]] && node --import tsx tests/bench/load.ts
true
