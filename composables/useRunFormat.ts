// Formatting shared by the run pages: project units, residual units (angles in
// arcseconds or centesimal seconds, as the project prefers) and the
// pass / watch / fail rating of an observation's tests.
// Relative imports (not ~~) so the unit tests can load this module without Nuxt.
import { METRES_PER } from '../server/engine/io/units'
import { formatPrecision, precisionScale, type PrecisionUnit } from '~~/shared/precision'
import type { ObservationResult, StationResult } from '../server/engine/types'
import { useProject } from './useProject'

export type Rating = 'pass' | 'watch' | 'fail'

export const UNIT_LABEL = { m: 'm', ft: 'ft', usft: 'US ft' } as const

/** The run routes return the engine's own result shapes for observations and stations. */
export type RunObservation = ObservationResult
export type RunStation = StationResult

/** |w| above 2 but under the critical value is worth a look (common practice). */
export const WATCH_W = 2

export function rateObservation(o: RunObservation): Rating {
  if (o.excluded) return 'pass'
  // a GNSS vector is tested whole: each of its three rows fails when the vector does
  if (o.flagged || o.tauFlagged || o.vectorTest?.flagged) return 'fail'
  if ((o.w !== null && Math.abs(o.w) > WATCH_W) || o.weak) return 'watch'
  return 'pass'
}

export const RATING_WORD: Record<Rating, string> = { pass: 'passes', watch: 'watch', fail: 'fails' }
export const RATING_ICON: Record<Rating, string> = { pass: '✓', watch: '!', fail: '✕' }

export type AngleFormat = 'dms' | 'gon'

/** Arcseconds in a full turn: 360° · 60′ · 60″ (sexagesimal degree). */
export const ARCSEC_PER_TURN = 360 * 60 * 60
/** Centesimal seconds in a full turn: 400 gon · 100 c · 100 cc (the gon is 1/400 of a full turn, ISO 80000-3). */
export const CC_PER_TURN = 400 * 100 * 100

/**
 * Arcseconds to centesimal seconds, derived from the two definitions of a full
 * turn (1 gon = 3240″ = 10 000 cc, so 1 cc = 0.324″); multiplied first so
 * whole-gon values stay exact in floating point.
 */
export function arcsecToCc(arcsec: number): number {
  return (arcsec * CC_PER_TURN) / ARCSEC_PER_TURN
}

/** A small angle (residual, σ, MDB) held in arcseconds, in the project's angular unit. */
export function smallAngle(arcsec: number, format: AngleFormat): number {
  return format === 'gon' ? arcsecToCc(arcsec) : arcsec
}

/** The label of a small angle: ″ for DMS projects, cc for gon projects. */
export function smallAngleUnit(format: AngleFormat): '″' | 'cc' {
  return format === 'gon' ? 'cc' : '″'
}

/**
 * `angleFormat` and `precisionUnit` default to the project the page belongs to
 * (loaded by the project shell), so every run view shows angles and precisions
 * the way the project prefers.
 */
export function useRunFormat(units: () => 'm' | 'ft' | 'usft', angleFormat?: () => AngleFormat | null | undefined, precisionUnit?: () => PrecisionUnit | null | undefined) {
  const shell = angleFormat && precisionUnit ? null : useProject().project
  const angles = (): AngleFormat => (angleFormat ? angleFormat() : shell?.value?.angleFormat) ?? 'dms'
  const scale = () => precisionScale(units(), precisionUnit ? precisionUnit() : shell?.value?.precisionUnit)
  const k = () => METRES_PER[units()]
  const unit = () => UNIT_LABEL[units()]
  /** a coordinate or length in project units */
  const len = (m: number | null | undefined, d = 4) => (m === null || m === undefined ? '—' : (m / k()).toFixed(d))
  /** a small length (σ, ellipse axis, allowable) in mm or hundredths of a foot (shared/precision.ts) */
  const small = (m: number | null | undefined, d?: number) => formatPrecision(m, scale(), d)
  const smallUnit = () => scale().label
  /** a residual / σ / MDB in its natural unit: the project's precision unit for lengths (mm or hundredths of a foot), ″ or cc for angles */
  const natural = (v: number | null | undefined, u: 'm' | 'arcsec', d = 1) =>
    (v === null || v === undefined ? '—' : u === 'm' ? formatPrecision(v, scale(), d) : smallAngle(v, angles()).toFixed(d))
  const naturalUnit = (u: 'm' | 'arcsec') => (u === 'm' ? scale().label : smallAngleUnit(angles()))
  /** words for the angular unit, for tooltips */
  const angleWords = () => (angles() === 'gon' ? 'centesimal seconds (cc, 1 gon = 10 000 cc)' : 'arcseconds (″)')
  const num = (v: number | null | undefined, d = 2) => (v === null || v === undefined || !Number.isFinite(v) ? '—' : v.toFixed(d))
  return { len, small, smallUnit, unit, natural, naturalUnit, angleWords, num }
}

export function kindLabel(kind: string): string {
  return ({ direction: 'Direction', angle: 'Angle', zenith: 'Zenith angle', slope_distance: 'Slope distance', horizontal_distance: 'Horizontal distance', azimuth: 'Azimuth', height_difference: 'Height difference', gnss_baseline: 'GNSS vector', control: 'Control coordinate' } as Record<string, string>)[kind] ?? kind
}

export function observationLabel(o: Pick<RunObservation, 'kind' | 'at' | 'from' | 'to' | 'component'>): string {
  if (o.kind === 'control') return `${o.at} ${o.component ?? ''}`.trim()
  if (o.kind === 'gnss_baseline') return `${o.at} → ${o.to} ${({ dx: 'ΔX', dy: 'ΔY', dz: 'ΔZ' } as Record<string, string>)[o.component ?? ''] ?? ''}`.trim()
  return o.from ? `${o.at}: ${o.from} → ${o.to}` : `${o.at} → ${o.to}`
}

/**
 * How a station was held in a run, in words: a benchmark held only in height
 * reads "H held", not "held fixed"; weighted control says which components.
 */
export function holdWords(st: Pick<RunStation, 'fixed' | 'kind' | 'controlled'>): string {
  const plane = st.controlled.east || st.controlled.north
  const height = st.controlled.height
  if (st.fixed) return plane && height ? 'held fixed (EN, H)' : plane ? 'EN held' : height ? 'H held' : 'held fixed'
  if (plane || height) return `weighted (${[plane ? 'EN' : '', height ? 'H' : ''].filter(Boolean).join(', ')})`
  return st.kind === 'control' ? 'control, free' : 'new'
}
