// Formatting shared by the run pages: project units, residual units and the
// pass / watch / fail rating of an observation's tests.
import { METRES_PER } from '~~/server/engine/io/units'
import type { ObservationResult, StationResult } from '~~/server/engine/types'

export type Rating = 'pass' | 'watch' | 'fail'

export const UNIT_LABEL = { m: 'm', ft: 'ft', usft: 'US ft' } as const

/** The run routes return the engine's own result shapes for observations and stations. */
export type RunObservation = ObservationResult
export type RunStation = StationResult

/** |w| above 2 but under the critical value is worth a look (common practice). */
export const WATCH_W = 2

export function rateObservation(o: RunObservation): Rating {
  if (o.excluded) return 'pass'
  if (o.flagged || o.tauFlagged) return 'fail'
  if ((o.w !== null && Math.abs(o.w) > WATCH_W) || o.weak) return 'watch'
  return 'pass'
}

export const RATING_WORD: Record<Rating, string> = { pass: 'passes', watch: 'watch', fail: 'fails' }
export const RATING_ICON: Record<Rating, string> = { pass: '✓', watch: '!', fail: '✕' }

export function useRunFormat(units: () => 'm' | 'ft' | 'usft') {
  const k = () => METRES_PER[units()]
  const unit = () => UNIT_LABEL[units()]
  /** a coordinate or length in project units */
  const len = (m: number | null | undefined, d = 4) => (m === null || m === undefined ? '—' : (m / k()).toFixed(d))
  /** a small length (σ, ellipse axis) in mm, or in project units for feet projects */
  const small = (m: number | null | undefined, d = 1) => {
    if (m === null || m === undefined) return '—'
    return units() === 'm' ? (m * 1000).toFixed(d) : (m / k()).toFixed(4)
  }
  const smallUnit = () => (units() === 'm' ? 'mm' : unit())
  /** a residual / MDB in its natural unit: mm for lengths, ″ for angles */
  const natural = (v: number | null, u: 'm' | 'arcsec', d = 1) => (v === null ? '—' : u === 'm' ? (v * 1000).toFixed(d) : v.toFixed(d))
  const naturalUnit = (u: 'm' | 'arcsec') => (u === 'm' ? 'mm' : '″')
  const num = (v: number | null | undefined, d = 2) => (v === null || v === undefined || !Number.isFinite(v) ? '—' : v.toFixed(d))
  return { len, small, smallUnit, unit, natural, naturalUnit, num }
}

export function kindLabel(kind: string): string {
  return ({ direction: 'Direction', angle: 'Angle', zenith: 'Zenith angle', slope_distance: 'Slope distance', horizontal_distance: 'Horizontal distance', azimuth: 'Azimuth', height_difference: 'Height difference', control: 'Control coordinate' } as Record<string, string>)[kind] ?? kind
}

export function observationLabel(o: Pick<RunObservation, 'kind' | 'at' | 'from' | 'to' | 'component'>): string {
  if (o.kind === 'control') return `${o.at} ${o.component ?? ''}`.trim()
  return o.from ? `${o.at}: ${o.from} → ${o.to}` : `${o.at} → ${o.to}`
}
