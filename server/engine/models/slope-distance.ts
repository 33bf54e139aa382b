// Slope distance S from the instrument point (mark + hi) to the target point
// (mark + ht).
//
// It enters the plane network as the ellipsoidal arc between the marks, reduced
// either with the zenith angle of the same line (refraction-corrected, on the
// sphere of the normal section) or, without a zenith, with the known heights of
// both ends — formulas in ../geodesy — and then the horizontal-distance
// equation (./horizontal-distance). Its σ:
//   σ_S² = a² + (b·10⁻⁶·S)² + σ_ci² + σ_ct²
// and the reduced distance's σ is propagated from σ_S, the partner zenith's own
// σ and σ_k by numerical partial derivatives of the reduction.
// Source: Rüeger, J.M. (1996) Electronic Distance Measurement, 4th ed., Springer,
// ch. 12, doi:10.1007/978-3-642-80233-1 — from memory.

import { distanceSigma } from '../sigma'
import { baseChecks, positiveLength } from './common'
import type { ObservationModel } from './types'

export const slopeDistance: ObservationModel<'slope_distance'> = {
  kind: 'slope_distance',
  label: 'slope distance',
  quantity: 'length',
  network: 'plane+height',
  validate: (o) => [...baseChecks(o), ...positiveLength(o, 'a distance')],
  stations: (o) => [o.at, o.to],
  profileSigma: (o, ctx) => distanceSigma(ctx.profile, o.value),
}
