// Height difference ΔH = H_to − H_at (levelling), and the equation shared by
// trigonometric heights (./zenith):
//   f = H_j − H_i,  ∂f/∂H_i = −1,  ∂f/∂H_j = +1
//   σ = σ_km·√L (L the levelling run in km; without L the horizontal length of
//   the line from the approximate coordinates)
// Source: Ghilani, C.D. (2017) Adjustment Computations, 6th ed., Wiley, ch. 12
// (differential levelling), doi:10.1002/9781119390664 — from memory.

import { levellingSigma } from '../sigma'
import { baseChecks } from './common'
import { pushTerm, type Linearized, type ObservationModel } from './types'

export function heightDifferenceEquation(hi: number, hj: number, ci: number, cj: number): Linearized {
  const out: Linearized = { computed: hj - hi, cols: [], coef: [] }
  pushTerm(out, ci, -1)
  pushTerm(out, cj, 1)
  return out
}

export const heightDifference: ObservationModel<'height_difference'> = {
  kind: 'height_difference',
  label: 'height difference',
  quantity: 'length',
  network: 'height',
  validate: (o) => baseChecks(o),
  stations: (o) => [o.at, o.to],
  profileSigma(o, ctx) {
    let len = o.lengthKm
    if (len === null) {
      const d = ctx.length(o.at, o.to)
      if (d !== null) len = d / 1000
    }
    return len === null || !(len > 0) ? null : levellingSigma(ctx.profile, len)
  },
}
