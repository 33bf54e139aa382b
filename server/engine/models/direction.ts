// Direction: circle reading at station i to target j in direction set s.
//
//   r_ij = T_ij − ω_s,  T_ij = atan2(E_j − E_i, N_j − N_i) (grid bearing)
//   ∂T/∂E_i = −ΔN/d²,  ∂T/∂N_i = ΔE/d²,  ∂T/∂E_j = ΔN/d²,  ∂T/∂N_j = −ΔE/d²,  ∂r/∂ω = −1
//   σ² = σ_dir² + (σ_ci² + σ_ct²)/d²  (centering of instrument and target)
// In a projected CRS the observed direction is first reduced to the grid chord
// (target height, normal section to geodesic, arc-to-chord: ../geodesy).
// Source: Ghilani, C.D. (2017) Adjustment Computations: Spatial Data Analysis,
// 6th ed., Wiley, ch. 15–16 (observation equations of directions and azimuths)
// and ch. 6–7 (σ of a direction with centering), doi:10.1002/9781119390664 — from memory.

import { azimuth } from '../geometry'
import { directionSigma } from '../sigma'
import type { ObservationRecord } from '../types'
import { baseChecks } from './common'
import { linearizedInto, pushTerm, type Linearized, type ObservationModel, type PlanePoint } from './types'

/** Grid bearing i → j and its partials (times `sign`) into `out`. */
export function bearingTerms(out: Linearized, i: PlanePoint, j: PlanePoint, sign = 1): number {
  const de = j.e - i.e
  const dn = j.n - i.n
  const d2 = de * de + dn * dn
  pushTerm(out, i.ce, (sign * -dn) / d2)
  pushTerm(out, i.cn, (sign * de) / d2)
  pushTerm(out, j.ce, (sign * dn) / d2)
  pushTerm(out, j.cn, (sign * -de) / d2)
  return azimuth(i.e, i.n, j.e, j.n)
}

export function directionEquation(i: PlanePoint, j: PlanePoint, orientation: number, orientationCol: number, into?: Linearized): Linearized {
  const out = linearizedInto(into)
  const t = bearingTerms(out, i, j)
  pushTerm(out, orientationCol, -1)
  out.computed = t - orientation
  return out
}

export const direction: ObservationModel<'direction'> = {
  kind: 'direction',
  label: 'direction',
  quantity: 'angle',
  network: 'plane',
  validate: (o) => baseChecks(o),
  stations: (o) => [o.at, o.to],
  profileSigma(o: ObservationRecord, ctx) {
    const d = ctx.length(o.at, o.to)
    return d === null ? null : directionSigma(ctx.profile, d)
  },
}
