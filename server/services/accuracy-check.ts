// The accuracy check of one finished run against a tolerance profile: every
// pair (relative precision) or point (FGDC circular accuracy) with its value,
// the allowable value and pass or fail. Pure: it reads the engine's result JSON,
// so the same check is shown on the sign-off page, stored in the sign-off and
// printed in the PDF.
import type { AdjustmentResult, Ellipse, RelativeResult, StationResult } from '../engine/types'
import { checkRelative, semiMajorAt95 } from './accuracy'
import type { ToleranceProfileRow } from './tolerance'
import { describeRule, fgdcCircular95FromAxes } from './tolerance'

export interface AccuracyItem {
  /** 'pair' for relative precision between two points, 'point' for one point */
  type: 'pair' | 'point'
  from: string
  to: string | null
  /** metres (pair only) */
  distance: number | null
  /** metres: the 95 % relative semi-major axis, or the FGDC 95 % circle radius */
  value: number
  /** metres */
  allowable: number
  passes: boolean
}

export interface AccuracyCheck {
  profile: { id: number; name: string; kind: ToleranceProfileRow['kind']; params: Record<string, number>; source: string; rule: string } | null
  items: AccuracyItem[]
  /** true when every item passes (and there is at least one) */
  passed: boolean
  /** stations named in a failing item */
  failing: string[]
  note: string
}

/** The subset of the engine result the check needs (older runs may lack fields). */
export type ResultLike = Pick<AdjustmentResult, 'stations'> & {
  relative?: RelativeResult[]
  settings?: Partial<AdjustmentResult['settings']>
  dof?: number
  plane?: { dof: number }
}

const ellipseOf = (s: StationResult): Ellipse | null => s.ellipse ?? null

export function checkAccuracy(profile: ToleranceProfileRow | null, result: ResultLike): AccuracyCheck {
  if (!profile) {
    return { profile: null, items: [], passed: false, failing: [], note: 'No tolerance profile is chosen for this project, so nothing was checked. Choose one on the project overview.' }
  }
  const items: AccuracyItem[] = []
  if (profile.kind === 'fgdc_95') {
    const threshold = (profile.params.thresholdMm ?? 0) / 1000
    for (const s of result.stations) {
      const e = ellipseOf(s)
      if (s.fixed || !e) continue
      const value = fgdcCircular95FromAxes(e.semiMajor, e.semiMinor)
      items.push({ type: 'point', from: s.name, to: null, distance: null, value, allowable: threshold, passes: value <= threshold })
    }
  } else {
    // The engine's semiMajor95 is at the run's confidence; rescale when that was not 95 %.
    const confidence = result.settings?.confidence ?? 0.95
    const estimated = (result.settings?.scaling ?? 'a-posteriori') === 'a-posteriori'
    const dof = result.plane?.dof ?? result.dof ?? 0
    for (const r of result.relative ?? []) {
      const sm95 = Math.abs(confidence - 0.95) < 1e-9 ? r.semiMajor95 : semiMajorAt95(r.semiMajor, estimated, dof)
      // "may not exceed": a value equal to the allowable passes (ALTA/NSPS 2021, 3.E).
      const c = checkRelative({ kind: profile.kind, params: profile.params }, { distance: r.distance, semiMajor95: sm95 })
      items.push({ type: 'pair', from: r.from, to: r.to, distance: r.distance, value: sm95, allowable: c.allowable ?? 0, passes: c.passes === true })
    }
  }
  const failing = [...new Set(items.filter((i) => !i.passes).flatMap((i) => (i.to ? [i.from, i.to] : [i.from])))].sort()
  const passedCount = items.filter((i) => i.passes).length
  const note = items.length === 0
    ? 'The run has nothing this profile can check (no relative precisions or point ellipses).'
    : `${passedCount} of ${items.length} ${profile.kind === 'fgdc_95' ? 'points' : 'pairs'} pass: ${describeRule(profile)}.`
  return {
    profile: { id: profile.id, name: profile.name, kind: profile.kind, params: profile.params, source: profile.source, rule: describeRule(profile) },
    items,
    passed: items.length > 0 && failing.length === 0,
    failing,
    note,
  }
}

/** Stations offered for sign-off by default: adjusted new stations not named in a failing item. */
export function defaultSignStations(result: ResultLike, check: AccuracyCheck): string[] {
  const failing = new Set(check.failing)
  return result.stations
    .filter((s) => s.kind === 'new' && !s.fixed && s.east !== null && s.north !== null && !failing.has(s.name))
    .map((s) => s.name)
    .sort()
}
