#!/usr/bin/env bash
# npm run bench — speed and memory figures (never pass/fail timing tests).
source "$(dirname "$0")/lib.sh"
cd "$ROOT"
ensure_node_modules
for b in tests/bench/engine.ts tests/bench/gnss.ts tests/bench/import.ts tests/bench/fuzz.ts; do
  [ -f "$b" ] && { log "bench: $b"; node --expose-gc --import tsx "$b"; }
done
log "bench: storing uploads, runs through the queue, a 10,000-station run page and 60 s of load (tests/bench/store.ts, api.ts, big-run.ts, load.ts)"
bash docker-free-scripts/bench-api.sh
