// Input and datum checks: settings, instrument profile, control rows (split
// "E N" and "H" rows of one station merged), every observation through its
// model's checks (σ finite and > 0 whatever its source), one rule for hi/ht
// between paired zenith and slope rows, and the structural datum of the plane.

import { fail } from './failure'
import { validateRecord } from './models/registry'
import type { AdjustSettings, ControlRecord, InstrumentProfile, ObservationRecord, StationResult } from './types'

export function validateSettings(s: AdjustSettings): AdjustSettings {
  const prob = (v: number, name: string) => {
    if (!(v > 0 && v < 1)) fail('input', `setting ${name} must lie between 0 and 1, got ${v}`)
  }
  prob(s.confidence, 'confidence')
  prob(s.alpha, 'alpha')
  prob(s.alpha0, 'alpha0')
  prob(s.beta0, 'beta0')
  if (!(Number.isInteger(s.maxIterations) && s.maxIterations >= 1)) fail('input', 'setting maxIterations must be a positive integer')
  if (s.datum !== 'as-stored' && s.datum !== 'as-given' && s.datum !== 'free') fail('input', `setting datum must be 'as-stored' or 'free'`)
  if (s.scaling !== 'a-posteriori' && s.scaling !== 'a-priori') fail('input', `setting scaling must be 'a-posteriori' or 'a-priori'`)
  // one word for people: the former 'as-given' reads as 'as-stored' from here on
  return s.datum === 'as-given' ? { ...s, datum: 'as-stored' } : s
}

export function validateProfile(p: InstrumentProfile): void {
  for (const [k, v] of Object.entries(p)) {
    if (typeof v !== 'number' || !Number.isFinite(v) || v < 0) fail('input', `instrument profile field ${k} must be a non-negative number`)
  }
}

/**
 * One control record per station. A station may be given by an "E N" row and an
 * "H" row (a benchmark): they are merged; a component given twice is refused.
 */
type MergedControl = ControlRecord & { heightLine?: number }

export function mergeControls(controls: ControlRecord[]): Map<string, ControlRecord> {
  const byName = new Map<string, MergedControl>()
  for (const c of controls) {
    if (!c.station) fail('input', `line ${c.line}, column at: control row names no station`)
    for (const [k, v] of Object.entries({ east: c.east, north: c.north, height: c.height, sdEast: c.sdEast, sdNorth: c.sdNorth, sdHeight: c.sdHeight })) {
      if (v !== null && !Number.isFinite(v)) fail('input', `line ${c.line}, column ${k}: not a finite number`)
      if (k.startsWith('sd') && v !== null && !(v > 0)) fail('input', `line ${c.line}, column sigma: standard deviation must be positive`)
    }
    if ((c.east === null) !== (c.north === null)) fail('input', `line ${c.line}, column value: give both east and north, or neither`)
    const prev = byName.get(c.station)
    if (!prev) {
      byName.set(c.station, { ...c, heightLine: c.line })
      continue
    }
    const planeTwice = prev.east !== null && c.east !== null
    const heightTwice = prev.height !== null && c.height !== null
    if (planeTwice || heightTwice) {
      const where = planeTwice ? prev.line : (prev as MergedControl).heightLine ?? prev.line
      fail('input', `line ${c.line}, column value: station ${c.station} is given as control twice (${planeTwice ? 'east and north' : 'height'} already on line ${where})`)
    }
    byName.set(c.station, {
      // the line of the plane part names the record; the height's own line is kept for messages
      line: prev.line,
      heightLine: prev.height !== null ? (prev as MergedControl).heightLine ?? prev.line : c.line,
      station: c.station,
      east: prev.east ?? c.east,
      north: prev.north ?? c.north,
      height: prev.height ?? c.height,
      sdEast: prev.east !== null ? prev.sdEast : c.sdEast,
      sdNorth: prev.north !== null ? prev.sdNorth : c.sdNorth,
      sdHeight: prev.height !== null ? prev.sdHeight : c.sdHeight,
    })
  }
  return byName
}

export function validateObservations(list: ObservationRecord[]): void {
  for (const o of list) {
    const issues = validateRecord(o)
    if (issues.length) fail('input', `line ${o.line}, column ${issues[0].column}: ${issues[0].message}`)
  }
  // one rule for instrument and target heights: the zenith and the slope
  // distance of one line must say the same (a blank is taken from the partner)
  const seen = new Map<string, ObservationRecord>()
  for (const o of list) {
    if (o.excluded || (o.kind !== 'zenith' && o.kind !== 'slope_distance')) continue
    const key = `${o.at}\u0000${o.to}\u0000${o.set ?? ''}`
    const other = seen.get(key)
    if (!other || other.kind === o.kind) {
      if (!other) seen.set(key, o)
      continue
    }
    for (const k of ['hi', 'ht'] as const) {
      const a = other[k]
      const b = o[k]
      if (a !== null && b !== null && Math.abs(a - b) > 5e-4) {
        fail('input', `line ${o.line}, column ${k}: ${k} ${b.toFixed(3)} m differs from ${a.toFixed(3)} m on line ${other.line} (${other.kind.replace('_', ' ')} of the same line); give both rows the same height in the same unit`)
      }
    }
  }
}

export type PlaneKindTag = 'direction' | 'angle' | 'distance' | 'azimuth'

/** Structural datum check of the plane network held as given. */
export function planeDatumCheck(names: string[], control: (ControlRecord | null)[], kinds: Set<PlaneKindTag>): void {
  const held = control.filter((c) => c).length
  if (held === 0) fail('singular', 'no control: hold at least one point fixed or weighted, or choose a free network')
  if (held === 1 && !kinds.has('azimuth')) {
    fail('singular', `no fixed orientation: hold an azimuth or a second point (only ${names[control.findIndex((c) => c)]} is control)`)
  }
  if (held === 1 && !kinds.has('distance')) fail('singular', 'no scale: measure a distance or hold a second point')
}

/** A new station needs at least two independent observation lines. */
export function stationLegCheck(
  names: string[],
  control: (ControlRecord | null)[],
  legs: { kind: PlaneKindTag; at: number; to: number; from?: number }[],
  free: boolean,
): void {
  const byStation: { kind: string; other: number }[][] = names.map(() => [])
  for (const d of legs) {
    byStation[d.at].push({ kind: d.kind, other: d.to })
    byStation[d.to].push({ kind: d.kind, other: d.at })
    if (d.from !== undefined) {
      byStation[d.at].push({ kind: d.kind, other: d.from })
      byStation[d.from].push({ kind: d.kind, other: d.at })
    }
  }
  for (let k = 0; k < names.length; k++) {
    if (control[k] && !free) continue
    const kinds = new Set(byStation[k].map((l) => l.kind))
    const others = new Set(byStation[k].map((l) => l.other))
    if (kinds.size === 1 && others.size === 1) {
      const kind = [...kinds][0].replace('_', ' ')
      const count = byStation[k].length
      fail('singular', `station ${names[k]} is connected by ${count === 1 ? `one ${kind} only` : `${kind}s to ${names[[...others][0]]} only`}`, [names[k]])
    }
  }
}

/**
 * One result shell per station, in first-mention order (control rows, then
 * observations): control values and σ as given, nothing adjusted yet. The plane
 * and height adjustment and the 3D adjustment both fill these in.
 */
export function stationShells(
  controls: ControlRecord[],
  observations: ObservationRecord[],
  controlByName: Map<string, ControlRecord>,
  free: boolean,
): { stationOut: Map<string, StationResult>; allNames: string[] } {
  const stationOut = new Map<string, StationResult>()
  const allNames: string[] = []
  const addName = (s: string) => {
    if (stationOut.has(s)) return
    allNames.push(s)
    const c = controlByName.get(s)
    stationOut.set(s, {
      name: s,
      east: c?.east ?? null,
      north: c?.north ?? null,
      height: c?.height ?? null,
      sdEast: c && c.east !== null && !free ? c.sdEast ?? 0 : null,
      sdNorth: c && c.north !== null && !free ? c.sdNorth ?? 0 : null,
      sdHeight: c && c.height !== null && !free ? c.sdHeight ?? 0 : null,
      ellipse: null,
      ellipse95: null,
      fixed: !!c && !free && c.sdEast === null && c.sdNorth === null && c.sdHeight === null,
      kind: c ? 'control' : 'new',
      controlled: { east: !!c && c.east !== null && !free, north: !!c && c.north !== null && !free, height: !!c && c.height !== null && !free },
    })
  }
  for (const c of controls) addName(c.station)
  for (const o of observations) {
    if (o.from) addName(o.from)
    addName(o.at)
    addName(o.to)
  }
  return { stationOut, allNames }
}
