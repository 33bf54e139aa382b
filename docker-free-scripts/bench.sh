#!/usr/bin/env bash
# npm run bench — speed and memory figures (never pass/fail timing tests).
source "$(dirname "$0")/lib.sh"
cd "$ROOT"
ensure_node_modules
for b in tests/bench/engine.ts tests/bench/import.ts; do
  [ -f "$b" ] && { log "bench: $b"; node --expose-gc --import tsx "$b"; }
done
if [ -f tests/bench/api.ts ]; then
  log "bench: tests/bench/api.ts"; bash docker-free-scripts/bench-api.sh
fi
