// What the batched readers (csv.ts, landxml.ts) share: one batch size, and
// the whole read result from a reader's batches for callers that want every
// record at once (the command line, tests, small typed-in sets).
import type { ObservationRecord, ReadResult, RecordBatches } from '../types'

/** Observation records handed out per batch by the batched readers. */
export const READ_BATCH = 2_000

/** Runs a batched reader to its end and returns everything it read, or its errors. */
export function collectBatches(batches: RecordBatches): ReadResult {
  const observations: ObservationRecord[] = []
  for (;;) {
    const step = batches.next()
    if (step.done) return step.value.ok ? { ...step.value, observations } : step.value
    for (const o of step.value) observations.push(o)
  }
}
