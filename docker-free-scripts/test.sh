#!/usr/bin/env bash
# npm test — every suite against its own PostgreSQL cluster and a fresh database.
# Extra arguments go to vitest (e.g. `npm test -- --project unit`).
# Several test runs can share the machine by setting TIEPOINT_TEST_DB,
# TIEPOINT_TEST_APP_PORT and NUXT_OUTPUT_DIR / NUXT_BUILD_DIR.
source "$(dirname "$0")/lib.sh"
cd "$ROOT"
started=$(date +%s)

PGPORT="${TIEPOINT_TEST_PG_PORT:-54339}"
export TIEPOINT_TEST_APP_PORT="${TIEPOINT_TEST_APP_PORT:-3939}"
export TIEPOINT_TEST_SMTP_PORT="${TIEPOINT_TEST_SMTP_PORT:-$((TIEPOINT_TEST_APP_PORT + 1000))}"
export AUTH_ORIGIN="http://127.0.0.1:$TIEPOINT_TEST_APP_PORT/api/auth"
export NUXT_OUTPUT_DIR="${NUXT_OUTPUT_DIR:-.output}"

ensure_node_modules
ensure_chromium
ensure_auth_secret
PG_EXTRA_OPTS="-c fsync=off -c synchronous_commit=off" pg_up pg-test "$PGPORT"
OWN_PG_STOP="${TIEPOINT_KEEP_TEST_DB:-}"
cleanup() { [ -n "$OWN_PG_STOP" ] || pg_down pg-test; }
trap cleanup EXIT
pg_database "$PGPORT" "${TIEPOINT_TEST_DB:-tiepoint_test}" fresh
migrate
ensure_build

if [ -z "${TIEPOINT_SKIP_TYPECHECK:-}" ]; then
  log "type check (vue-tsc)"
  npx vue-tsc -b --noEmit
fi

log "running tests"
status=0
summary="$ROOT/.data/vitest-summary.json"
rm -f "$summary"
npx vitest run --reporter=default --reporter=json --outputFile.json="$summary" "$@" || status=$?
# One plain closing line that any CI reads the same way.
if [ -f "$summary" ]; then
  node -e 'const r = JSON.parse(require("fs").readFileSync(process.argv[1], "utf8"));
    const skipped = (r.numPendingTests || 0) + (r.numTodoTests || 0);
    console.log(`Tests: ${r.numPassedTests} passed, ${r.numFailedTests} failed` + (skipped ? `, ${skipped} skipped` : ""))' "$summary"
fi
log "tests finished in $(( $(date +%s) - started )) s"
exit $status
