// Angle at station i, clockwise from backsight b to foresight f.
//
//   α = T_if − T_ib  (partials: those of the two bearings, ./direction)
//   σ² = 2σ_dir² + σ_ct²(1/d_b² + 1/d_f²) + σ_ci²·d_bf²/(d_b²·d_f²)
// (two pointings; centering of the two targets and of the instrument.)
// In a projected CRS each ray is reduced like a direction (../geodesy).
// Source: Ghilani, C.D. (2017) Adjustment Computations, 6th ed., Wiley, ch. 6–7
// and 15, doi:10.1002/9781119390664 — from memory.

import { angleSigma } from '../sigma'
import { baseChecks } from './common'
import { bearingTerms } from './direction'
import { linearizedInto, type Linearized, type ObservationModel, type PlanePoint } from './types'

export function angleEquation(at: PlanePoint, back: PlanePoint, fore: PlanePoint, into?: Linearized): Linearized {
  const out = linearizedInto(into)
  const tf = bearingTerms(out, at, fore, 1)
  const tb = bearingTerms(out, at, back, -1)
  out.computed = tf - tb
  return out
}

export const angle: ObservationModel<'angle'> = {
  kind: 'angle',
  label: 'angle',
  quantity: 'angle',
  network: 'plane',
  validate(o) {
    const issues = baseChecks(o)
    if (!o.from) issues.push({ column: 'from', message: 'an angle needs a backsight' })
    else if (o.from === o.at || o.from === o.to) issues.push({ column: 'from', message: 'backsight must differ from station and foresight' })
    return issues
  },
  stations: (o) => [o.at, o.from ?? '', o.to].filter((s) => s !== ''),
  profileSigma(o, ctx) {
    if (!o.from) return null
    const b = ctx.length(o.at, o.from)
    const f = ctx.length(o.at, o.to)
    const bf = ctx.length(o.from, o.to)
    return b === null || f === null || bf === null ? null : angleSigma(ctx.profile, b, f, bf)
  },
}
