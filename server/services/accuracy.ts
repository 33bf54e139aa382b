// Accuracy check of relative precision against a project's tolerance profile.
// Pure functions (no database) so the run worker and the sign-off both use the
// same arithmetic.
//
// relative_ppm / custom: allowable = mm + ppm·distance at 95 % confidence
//   (ALTA/NSPS Minimum Standard Detail Requirements, 2021, section 3.E:
//   "2 cm + 50 ppm" relative positional precision at 95 %).
// fgdc_95: a fixed 95 % threshold in mm (FGDC-STD-007.2-1998 accuracy classes).
// The compared quantity is the semi-major axis of the relative error ellipse
// at 95 % — the radius of the circle that encloses the 95 % ellipse, a
// conservative reading of "positional precision at 95 %" (common practice).
import { ellipseScale } from '../engine/stats'

export interface ToleranceSpec {
  id?: number
  name?: string
  kind: 'relative_ppm' | 'fgdc_95' | 'custom'
  params: Record<string, number>
  source?: string
}

/**
 * Allowable relative positional precision (metres) for two points `distance`
 * metres apart; null when the profile is not a pair rule (fgdc_95 rates single
 * points, see accuracy-check.ts).
 */
export function allowableRelative(spec: ToleranceSpec, distance: number): number | null {
  if (spec.kind === 'fgdc_95') return null
  const mm = spec.params.mm
  if (typeof mm !== 'number') return null
  return mm / 1000 + (spec.params.ppm ?? 0) * 1e-6 * distance
}

/**
 * The relative ellipse's semi-major axis at 95 %, from its 1σ semi-major axis.
 * `estimated` = precisions scaled by the a-posteriori σ̂0 (then F-based, with
 * `dof` degrees of freedom), otherwise χ²(2) based.
 */
export function semiMajorAt95(semiMajor1Sigma: number, estimated: boolean, dof: number): number {
  return semiMajor1Sigma * ellipseScale(0.95, estimated, dof)
}

export interface RelativeCheck {
  allowable: number | null
  passes: boolean | null
  /** the 95 % value that was compared */
  semiMajor95: number
}

/** Compares one connected pair against the tolerance. null spec = no check (passes null). */
export function checkRelative(spec: ToleranceSpec | null, pair: { distance: number; semiMajor95: number }): RelativeCheck {
  if (!spec) return { allowable: null, passes: null, semiMajor95: pair.semiMajor95 }
  const allowable = allowableRelative(spec, pair.distance)
  if (allowable === null) return { allowable: null, passes: null, semiMajor95: pair.semiMajor95 }
  // A tiny epsilon keeps a value printed as equal to the allowable from failing on rounding.
  return { allowable, passes: pair.semiMajor95 <= allowable + 1e-12, semiMajor95: pair.semiMajor95 }
}

/** Words a person can quote: how the allowable value was computed. */
export function describeTolerance(spec: ToleranceSpec): string {
  if (spec.kind === 'fgdc_95') return `${spec.params.thresholdMm} mm at 95 % (${spec.source ?? 'no source given'})`
  return `${spec.params.mm} mm + ${spec.params.ppm ?? 0} ppm of the distance at 95 % (${spec.source ?? 'no source given'})`
}
