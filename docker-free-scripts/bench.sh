#!/usr/bin/env bash
# npm run bench — speed and memory figures (never pass/fail timing tests).
source "$(dirname "$0")/lib.sh"
cd "$ROOT"
ensure_node_modules
for b in tests/bench/engine.ts tests/bench/import.ts; do
  [ -f "$b" ] && { log "bench: $b"; node --expose-gc --import tsx "$b"; }
done
log "bench: storing uploads and a run through the queue (tests/bench/store.ts, tests/bench/api.ts)"
bash docker-free-scripts/bench-api.sh
