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
}

const MM: PrecisionScale = { perMetre: 1000, decimals: 1, label: 'mm', key: 'mm', words: 'millimetres (mm)' }

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
  }
}

/** A small length held in metres, in the scale's unit (no unit text; the header carries it). */
export function formatPrecision(metres: number | null | undefined, scale: PrecisionScale, decimals = scale.decimals): string {
  if (metres === null || metres === undefined || !Number.isFinite(metres)) return '—'
  return (metres * scale.perMetre).toFixed(decimals)
}
