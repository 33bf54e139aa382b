// Horizontal distance between stations i and j.
//
//   d = √(ΔE² + ΔN²),  ∂d/∂E_i = −ΔE/d, ∂d/∂N_i = −ΔN/d, ∂d/∂E_j = ΔE/d, ∂d/∂N_j = ΔN/d
//   σ² = a² + (b·10⁻⁶·D)² + σ_ci² + σ_ct²   (EDM constant and ppm part, centering)
// The measured value is a ground distance at the mean height h̄ of its marks;
// before it enters the plane it is reduced to the ellipsoid, s = D·R/(R + h̄),
// and to the grid by the line scale factor (or, on a local plane, to the
// project height) — ../geodesy.
// Source: Ghilani, C.D. (2017) Adjustment Computations, 6th ed., Wiley, ch. 6 and
// 14, doi:10.1002/9781119390664 — from memory; ISO 17123-4:2012 for the a + b·ppm form.

import { distanceSigma } from '../sigma'
import { baseChecks, positiveLength } from './common'
import { linearizedInto, pushTerm, type Linearized, type ObservationModel, type PlanePoint } from './types'

export function distanceEquation(i: PlanePoint, j: PlanePoint, into?: Linearized): Linearized {
  const de = j.e - i.e
  const dn = j.n - i.n
  const d = Math.hypot(de, dn)
  const out = linearizedInto(into)
  out.computed = d
  pushTerm(out, i.ce, -de / d)
  pushTerm(out, i.cn, -dn / d)
  pushTerm(out, j.ce, de / d)
  pushTerm(out, j.cn, dn / d)
  return out
}

export const horizontalDistance: ObservationModel<'horizontal_distance'> = {
  kind: 'horizontal_distance',
  label: 'horizontal distance',
  quantity: 'length',
  network: 'plane',
  validate: (o) => [...baseChecks(o), ...positiveLength(o, 'a distance')],
  stations: (o) => [o.at, o.to],
  profileSigma: (o, ctx) => distanceSigma(ctx.profile, o.value),
}
