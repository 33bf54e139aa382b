#!/usr/bin/env bash
# npm run worker — one more adjustment worker against DATABASE_URL (this or another host).
source "$(dirname "$0")/lib.sh"
cd "$ROOT"
ensure_node_modules
if [ -z "${DATABASE_URL:-}" ]; then
  PGPORT="${TIEPOINT_PG_PORT:-54329}"
  pg_up pg "$PGPORT"; pg_database "$PGPORT" tiepoint
fi
exec npx tsx server/workers/run.ts
