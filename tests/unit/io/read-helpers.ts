// What the reader tests share: a read result that must be good or bad, and a
// batched reader run to its end with the size of each batch it handed out.
import type { ObservationRecord, ReadEnd, ReadIssue, ReadResult, RecordBatches } from '../../../server/engine/types'

export function ok(r: ReadResult) {
  if (!r.ok) throw new Error('expected ok, got errors: ' + JSON.stringify(r.errors))
  return r
}

export function errorsOf(r: ReadResult): ReadIssue[] {
  if (r.ok) throw new Error('expected errors, got ok')
  return r.errors
}

export function drain(batches: RecordBatches): { sizes: number[]; records: ObservationRecord[]; end: ReadEnd } {
  const sizes: number[] = []
  const records: ObservationRecord[] = []
  for (;;) {
    const step = batches.next()
    if (step.done) return { sizes, records, end: step.value }
    sizes.push(step.value.length)
    records.push(...step.value)
  }
}
