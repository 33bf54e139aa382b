// GNSS baseline: the vector ΔX ΔY ΔZ between two marks in the Earth-centred
// Earth-fixed frame of the project's datum, with its 3×3 covariance from σX σY
// σZ and ρXY ρXZ ρYZ. It enters only the 3D adjustment; a plane network refuses
// it (a georeferenced CRS and a geoid separation are needed to combine it).
//   f = X_to − X_at (per component); C = D R D with D = diag(σ), R the
//   correlation matrix; the row block is whitened by C's Cholesky factor.
// Source: Leick, A., Rapoport, L., Tatarnikov, D. (2015) GPS Satellite Surveying,
// 4th ed., Wiley, ch. 2 (baseline vectors and their covariance) — from memory.

import { baseChecks } from './common'
import type { BaselineVector } from '../types'
import type { ModelIssue, ObservationModel } from './types'

/** Lower Cholesky factor of the vector's covariance (row-major 3×3), null when not positive definite. */
export function baselineCovarianceCholesky(v: BaselineVector): Float64Array | null {
  const [sx, sy, sz] = v.sigma
  const [rxy, rxz, ryz] = v.correlation ?? [0, 0, 0]
  const c = [sx * sx, rxy * sx * sy, rxz * sx * sz, rxy * sx * sy, sy * sy, ryz * sy * sz, rxz * sx * sz, ryz * sy * sz, sz * sz]
  const l = new Float64Array(9)
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j <= i; j++) {
      let s = c[i * 3 + j]
      for (let k = 0; k < j; k++) s -= l[i * 3 + k] * l[j * 3 + k]
      if (i === j) {
        // relative threshold: a covariance that is singular to rounding is refused
        if (!(s > 1e-12 * c[i * 3 + i])) return null
        l[i * 3 + i] = Math.sqrt(s)
      } else {
        l[i * 3 + j] = s / l[j * 3 + j]
      }
    }
  }
  return l
}

function vectorChecks(v: BaselineVector | undefined): ModelIssue[] {
  if (!v) return [{ column: 'value', message: 'a GNSS baseline needs three numbers ΔX ΔY ΔZ in metres' }]
  const issues: ModelIssue[] = []
  if (!(v.d.length === 3 && v.d.every(Number.isFinite))) issues.push({ column: 'value', message: 'ΔX ΔY ΔZ must be three finite numbers in metres' })
  else if (Math.hypot(...v.d) === 0) issues.push({ column: 'value', message: 'the vector has zero length' })
  if (!(v.sigma.length === 3 && v.sigma.every((s) => Number.isFinite(s) && s > 0))) {
    issues.push({ column: 'sigma', message: 'σX σY σZ must be three positive numbers in mm' })
  }
  if (v.correlation !== null) {
    if (!(v.correlation.length === 3 && v.correlation.every((r) => Number.isFinite(r) && Math.abs(r) < 1))) {
      issues.push({ column: 'correlation', message: 'ρXY ρXZ ρYZ must be three numbers between −1 and 1 (exclusive)' })
    }
  }
  if (!issues.length && !baselineCovarianceCholesky(v)) {
    issues.push({ column: 'correlation', message: 'the covariance from these σ and ρ is not positive definite (the correlations contradict each other)' })
  }
  return issues
}

export const gnssBaseline: ObservationModel<'gnss_baseline'> = {
  kind: 'gnss_baseline',
  label: 'GNSS baseline',
  quantity: 'length',
  network: '3d',
  validate: (o) => [...baseChecks(o), ...vectorChecks(o.vector)],
  stations: (o) => [o.at, o.to],
  // the σ is per component (vector.sigma); no single σ stands for the row
  profileSigma: () => null,
}
