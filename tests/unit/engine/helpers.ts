// Invented networks for the engine tests: a seeded random generator, a
// perturbed-grid plane network with directions and distances, and record
// builders. Nothing here comes from a real survey.
import type { AdjustmentResult, AdjustOutcome, ControlRecord, ObservationRecord } from '../../../server/engine/types'

export function rng(seed: number): () => number {
  // mulberry32: small deterministic generator for repeatable invented data
  let a = seed >>> 0
  return () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

export function gauss(r: () => number): number {
  return Math.sqrt(-2 * Math.log(1 - r())) * Math.cos(2 * Math.PI * r())
}

/** The result of an adjustment that must succeed; a failure stops the test with its code and reason. */
export function ok(o: AdjustOutcome): AdjustmentResult {
  if (!o.ok) throw new Error(`${o.code}: ${o.reason}`)
  return o.result
}

export const ARC = Math.PI / (180 * 3600)

export function obs(p: Partial<ObservationRecord> & Pick<ObservationRecord, 'kind' | 'at' | 'to' | 'value'>): ObservationRecord {
  return { line: 0, from: null, sigma: null, hi: null, ht: null, set: null, lengthKm: null, note: '', ...p }
}

export function fixed(station: string, east: number | null, north: number | null, height: number | null = null): ControlRecord {
  return { line: 0, station, east, north, height, sdEast: null, sdNorth: null, sdHeight: null }
}

export function az(a: [number, number], b: [number, number]): number {
  const x = Math.atan2(b[0] - a[0], b[1] - a[1])
  return x < 0 ? x + 2 * Math.PI : x
}

export interface GridNet {
  truth: Map<string, [number, number]>
  controls: ControlRecord[]
  observations: ObservationRecord[]
}

/**
 * side×side perturbed grid, spacing ~`spacing` m, every station observes its
 * neighbours within 1.5 spacings with a direction (one set per station) and a
 * horizontal distance; the four corners are fixed. `noise` scales simulated
 * Gaussian errors of σ_dir = 2″ and σ_d = 2 mm (both given explicitly).
 */
export function gridNetwork(side: number, seed: number, noise = 1, spacing = 200): GridNet {
  const r = rng(seed)
  const truth = new Map<string, [number, number]>()
  const name = (i: number, j: number) => `P${i}_${j}`
  for (let i = 0; i < side; i++)
    for (let j = 0; j < side; j++)
      truth.set(name(i, j), [5000 + i * spacing + (r() - 0.5) * 0.3 * spacing, 8000 + j * spacing + (r() - 0.5) * 0.3 * spacing])
  const corners = [name(0, 0), name(side - 1, 0), name(0, side - 1), name(side - 1, side - 1)]
  const controls = corners.map((c, k) => ({ ...fixed(c, truth.get(c)![0], truth.get(c)![1]), line: k + 1 }))
  const observations: ObservationRecord[] = []
  let line = 10
  const sDir = 2 * ARC
  const sDist = 0.002
  for (let i = 0; i < side; i++)
    for (let j = 0; j < side; j++) {
      const at = name(i, j)
      const orient = r() * 2 * Math.PI
      for (let di = -1; di <= 1; di++)
        for (let dj = -1; dj <= 1; dj++) {
          if ((di === 0 && dj === 0) || i + di < 0 || j + dj < 0 || i + di >= side || j + dj >= side) continue
          // about six neighbours: skip one diagonal
          if (di === 1 && dj === -1) continue
          if (di === -1 && dj === 1) continue
          const to = name(i + di, j + dj)
          const a = truth.get(at)!
          const b = truth.get(to)!
          let v = az(a, b) - orient + noise * sDir * gauss(r)
          v = ((v % (2 * Math.PI)) + 2 * Math.PI) % (2 * Math.PI)
          observations.push(obs({ line: line++, kind: 'direction', at, to, value: v, sigma: sDir }))
          const d = Math.hypot(b[0] - a[0], b[1] - a[1]) + noise * sDist * gauss(r)
          observations.push(obs({ line: line++, kind: 'horizontal_distance', at, to, value: d, sigma: sDist }))
        }
    }
  return { truth, controls, observations }
}
