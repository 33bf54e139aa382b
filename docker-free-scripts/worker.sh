#!/usr/bin/env bash
# npm run worker — one more adjustment worker against DATABASE_URL (this or another host).
source "$(dirname "$0")/lib.sh"
cd "$ROOT"
ensure_node_modules
database_or_local_cluster
exec npx tsx server/workers/run.ts
