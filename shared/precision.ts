// The one rule for how small lengths — standard deviations, error-ellipse axes,
// allowables, shifts between runs — are shown: on screen, on the sign-off page,
// in the PDF and CSV of a release. Metre projects use millimetres; feet
// projects choose millimetres or hundredths of their own foot (a project
// setting), and every header names the unit this returns.
// Relative imports so the server, the app and the unit tests share it.
import { METRES_PER, type LengthUnit } from '../server/engine/io/units'

export type PrecisionUnit = 'mm' | 'hundredth_ft'
export const PRECISION_UNITS: readonly PrecisionUnit[] = ['mm', 'hundredth_ft']

export interface PrecisionScale {
  /** displayed units per metre */
  perMetre: number
  /** decimals shown by default: 0.1 mm, or 0.01 of a hundredth (≈ 0.03 mm) */
  decimals: number
  /** header label: 'mm', '0.01 ft', '0.01 US ft' */
  label: string
  /** machine-readable suffix for CSV column names: 'mm', 'cft', 'cusft' */
  key: string
  /** in words, for captions and the PDF */
  words: string
  /**
   * one displayed unit is ratio[0] / ratio[1] metres, both integers, so a typed
   * value converts to metres with a single rounding (parsePrecision)
   */
  ratio: readonly [number, number]
}

const MM: PrecisionScale = { perMetre: 1000, decimals: 1, label: 'mm', key: 'mm', words: 'millimetres (mm)', ratio: [1, 1000] }

/** Decides the scale: the only place that knows the rule. */
export function precisionScale(units: LengthUnit, setting: PrecisionUnit | null | undefined): PrecisionScale {
  if (units === 'm' || setting !== 'hundredth_ft') return MM
  const us = units === 'usft'
  return {
    // a hundredth of a foot is METRES_PER[units] / 100 metres
    perMetre: 100 / METRES_PER[units],
    decimals: 2,
    label: us ? '0.01 US ft' : '0.01 ft',
    key: us ? 'cusft' : 'cft',
    words: us ? 'hundredths of a US survey foot (0.01 US ft)' : 'hundredths of an international foot (0.01 ft)',
    // 0.01 ft = 0.003048 m = 3048 / 1 000 000 m; 0.01 US ft = 12/3937 m (1 US ft = 1200/3937 m)
    ratio: us ? [12, 3937] : [3048, 1_000_000],
  }
}

/** A small length held in metres, in the scale's unit (no unit text; the header carries it). */
export function formatPrecision(metres: number | null | undefined, scale: PrecisionScale, decimals = scale.decimals): string {
  if (metres === null || metres === undefined || !Number.isFinite(metres)) return '—'
  return (metres * scale.perMetre).toFixed(decimals)
}

/** A small length held in metres, as text for an input in the scale's unit (up to two more decimals than shown, no trailing zeros). */
export function precisionInputText(metres: number | null | undefined, scale: PrecisionScale): string {
  if (metres === null || metres === undefined || !Number.isFinite(metres)) return ''
  return String(Number((metres * scale.perMetre).toFixed(scale.decimals + 2)))
}

export type ParsedPrecision = { ok: true; metres: number } | { ok: false; message: string }

// A plain decimal number as people type it; a comma is read as the decimal
// mark. No exponent: nobody types a σ in scientific notation.
const DECIMAL_RE = /^([+-]?)(\d*)(?:[.,](\d*))?$/

/**
 * Text typed in the scale's unit to metres. The decimal digits are taken as an
 * integer n with d decimals, so metres = n · ratio[0] / (ratio[1] · 10^d): the
 * product and the divisor are exact integers in a double, and the one division
 * rounds once — "1.25" hundredths of a foot gives the double nearest 0.00381 m,
 * not 1.25 × 0.003048 rounded twice. Blank text is null (no value).
 */
export function parsePrecision(text: string, scale: PrecisionScale): ParsedPrecision | null {
  const r = convert(text, scale, 1)
  return r && (r.ok ? { ok: true, metres: r.value } : r)
}

/** The same in millimetres, for the fields the API takes in mm (a run's station holds): "5" mm stays 5, not 0.005 × 1000. */
export function parsePrecisionMm(text: string, scale: PrecisionScale): { ok: true; mm: number } | { ok: false; message: string } | null {
  const r = convert(text, scale, 1000)
  return r && (r.ok ? { ok: true, mm: r.value } : r)
}

/**
 * A length typed in a project's own unit (a project height, a geoid separation) to metres, with the
 * same single rounding: 1 ft = 3048/10 000 m, 1 US ft = 1200/3937 m (see the header of units.ts).
 */
const LENGTH_RATIO: Record<LengthUnit, { ratio: readonly [number, number]; label: string }> = {
  m: { ratio: [1, 1], label: 'm' }, ft: { ratio: [3048, 10_000], label: 'ft' }, usft: { ratio: [1200, 3937], label: 'US ft' },
}
export function parseLength(text: string, units: LengthUnit): ParsedPrecision | null {
  const r = convert(text, LENGTH_RATIO[units], 1)
  return r && (r.ok ? { ok: true, metres: r.value } : r)
}

function convert(text: string, scale: Pick<PrecisionScale, 'ratio' | 'label'>, perMetre: 1 | 1000): { ok: true; value: number } | { ok: false; message: string } | null {
  const t = text.trim()
  if (t === '') return null
  const m = DECIMAL_RE.exec(t)
  const int = m?.[2] ?? ''
  const frac = m?.[3] ?? ''
  if (!m || (int === '' && frac === '')) return { ok: false, message: `'${t}' is not a number of ${scale.label}` }
  const n = Number(`${int}${frac}`)
  const num = scale.ratio[0] * perMetre
  const divisor = scale.ratio[1] * 10 ** frac.length
  const exact = n * num <= Number.MAX_SAFE_INTEGER && divisor <= Number.MAX_SAFE_INTEGER && frac.length <= 22
  const value = exact ? (n * num) / divisor : (Number(`${int || '0'}.${frac || '0'}`) * num) / scale.ratio[1]
  if (!Number.isFinite(value)) return { ok: false, message: `'${t}' is not a number of ${scale.label}` }
  return { ok: true, value: m[1] === '-' ? -value : value }
}
