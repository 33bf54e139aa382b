// Checks shared by the observation models.
import type { ObservationRecord } from '../types'
import type { ModelIssue } from './types'

/** at/to present and different, value finite, hi/ht finite when given, length positive when given. */
export function baseChecks(o: ObservationRecord): ModelIssue[] {
  const issues: ModelIssue[] = []
  if (!o.at) issues.push({ column: 'at', message: 'the station is missing' })
  if (!o.to) issues.push({ column: 'to', message: 'the target is missing' })
  if (o.at && o.at === o.to) issues.push({ column: 'to', message: `target and station are both ${o.at}` })
  if (!Number.isFinite(o.value)) issues.push({ column: 'value', message: 'not a finite number' })
  for (const k of ['hi', 'ht'] as const) {
    const v = o[k]
    if (v !== null && v !== undefined && !Number.isFinite(v)) issues.push({ column: k, message: 'not a finite number' })
  }
  if (o.lengthKm !== null && o.lengthKm !== undefined && !(Number.isFinite(o.lengthKm) && o.lengthKm > 0)) {
    issues.push({ column: 'length', message: 'must be a positive number of km' })
  }
  return issues
}

export function positiveLength(o: ObservationRecord, what: string): ModelIssue[] {
  return Number.isFinite(o.value) && !(o.value > 0) ? [{ column: 'value', message: `${what} must be positive` }] : []
}
