// A-priori standard deviations of observations from an instrument profile.
//
// Formulas (common practice; as in Ghilani, C.D. (2017) Adjustment Computations:
// Spatial Data Analysis, 6th ed., Wiley, ch. 6–7 "Error propagation in angle and
// distance observations" — recalled from memory):
//   distance   σ_D² = a² + (b·10⁻⁶·D)² + σ_i² + σ_t²
//   direction  σ_r² = σ_dir² + (σ_i² + σ_t²)/D²
//   angle      σ_α² = 2σ_dir² + σ_t²(1/D_b² + 1/D_f²) + σ_i²·D_bf²/(D_b²·D_f²)
//   levelling  σ_Δh = σ_km·√L
//   trig. height Δh = S·cos z:  σ_Δh² = (cos z·σ_S)² + (S·sin z·σ_z)²
// with σ_i, σ_t the centering errors of instrument and target, D_bf the distance
// from backsight to foresight.

import type { InstrumentProfile } from './types'

/**
 * Used when the caller gives no profile. Invented, typical of a 3″ total station
 * with a 2 mm + 2 ppm EDM, 1 mm optical-plummet centering and a digital level of
 * 1.0 mm/√km; not taken from any manufacturer's data sheet.
 */
export const DEFAULT_PROFILE: InstrumentProfile = {
  distanceMm: 2,
  distancePpm: 2,
  directionArcsec: 3,
  zenithArcsec: 5,
  centeringInstrumentMm: 1,
  centeringTargetMm: 1,
  levellingMmPerSqrtKm: 1,
}

const MM = 1e-3
const ARCSEC = Math.PI / (180 * 3600)

export function distanceSigma(p: InstrumentProfile, d: number): number {
  const a = p.distanceMm * MM
  const b = p.distancePpm * 1e-6 * d
  const ci = p.centeringInstrumentMm * MM
  const ct = p.centeringTargetMm * MM
  return Math.sqrt(a * a + b * b + ci * ci + ct * ct)
}

export function directionSigma(p: InstrumentProfile, d: number): number {
  const s = p.directionArcsec * ARCSEC
  const ci = p.centeringInstrumentMm * MM
  const ct = p.centeringTargetMm * MM
  const dd = Math.max(d, 1e-3)
  return Math.sqrt(s * s + (ci * ci + ct * ct) / (dd * dd))
}

export function angleSigma(p: InstrumentProfile, dBack: number, dFore: number, dBackFore: number): number {
  const s = p.directionArcsec * ARCSEC
  const ci = p.centeringInstrumentMm * MM
  const ct = p.centeringTargetMm * MM
  const b = Math.max(dBack, 1e-3)
  const f = Math.max(dFore, 1e-3)
  return Math.sqrt(2 * s * s + ct * ct * (1 / (b * b) + 1 / (f * f)) + (ci * ci * dBackFore * dBackFore) / (b * b * f * f))
}

export function zenithSigma(p: InstrumentProfile): number {
  return p.zenithArcsec * ARCSEC
}

export function levellingSigma(p: InstrumentProfile, lengthKm: number): number {
  return p.levellingMmPerSqrtKm * MM * Math.sqrt(Math.max(lengthKm, 1e-6))
}
