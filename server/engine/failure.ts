// Typed failures of an adjustment, thrown inside the engine and returned by
// adjustNetwork as { ok: false, code, reason } (the engine never throws outward).
import type { AdjustOutcome } from './types'

export type Failure = Extract<AdjustOutcome, { ok: false }>

export class Stop {
  constructor(readonly failure: Failure) {}
}

export const fail = (code: Failure['code'], reason: string, stations?: string[]): never => {
  throw new Stop(stations ? { ok: false, code, reason, stations } : { ok: false, code, reason })
}
