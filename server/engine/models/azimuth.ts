// Azimuth from station i to j, clockwise from north.
//
// On a local plane: north of the plane, α = T_ij (partials of ./direction).
// In a projected CRS: the azimuth observed at i (astronomic, gyro or derived
// from satellite positions) is clockwise from the ellipsoidal north; it is
// carried to the grid bearing of the chord by the grid convergence c and the
// arc-to-chord and target-height corrections (../geodesy):
//   T_ij = α + c − (t − T) + δ_h + δ_g
// σ as for a direction (σ_dir with centering).
// Source: Ghilani, C.D. (2017) Adjustment Computations, 6th ed., Wiley, ch. 15
// and 20 (map projections, convergence), doi:10.1002/9781119390664 — from memory.

import { directionSigma } from '../sigma'
import { baseChecks } from './common'
import { bearingTerms } from './direction'
import { linearizedInto, type Linearized, type ObservationModel, type PlanePoint } from './types'

export function azimuthEquation(i: PlanePoint, j: PlanePoint, into?: Linearized): Linearized {
  const out = linearizedInto(into)
  out.computed = bearingTerms(out, i, j)
  return out
}

export const azimuth: ObservationModel<'azimuth'> = {
  kind: 'azimuth',
  label: 'azimuth',
  quantity: 'angle',
  network: 'plane',
  validate: (o) => baseChecks(o),
  stations: (o) => [o.at, o.to],
  profileSigma(o, ctx) {
    const d = ctx.length(o.at, o.to)
    return d === null ? null : directionSigma(ctx.profile, d)
  },
}
