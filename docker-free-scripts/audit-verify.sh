#!/usr/bin/env bash
# npm run audit:verify — check the audit log's hash chain (server/db/audit-verify.ts)
# against DATABASE_URL, or the project's own cluster when it is not set.
source "$(dirname "$0")/lib.sh"
cd "$ROOT"
ensure_node_modules
database_or_local_cluster
exec npx tsx server/db/audit-verify.ts
