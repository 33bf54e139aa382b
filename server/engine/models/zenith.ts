// Zenith angle z at the instrument point to the target point.
//
// With the slope distance S of the same line it gives the trigonometric height
// difference of the marks (on the sphere of radius R of the normal section,
// geometric zenith z_g = z + k·S/(2R), ../geodesy):
//   ΔH = [√((R + h₁)² + S² + 2(R + h₁)S·cos z_g) − (R + h₁)] + hi − ht
// which enters the height network with the equation of ./height-difference.
// σ of ΔH by numerical partial derivatives of that expression:
//   σ²_ΔH = (∂ΔH/∂S·σ_S)² + (∂ΔH/∂z·σ_z)² + (∂ΔH/∂k·σ_k)² + σ_hi² + σ_ht²
// where ∂ΔH/∂k ≈ D²/(2R) — the refraction uncertainty — and σ_hi = σ_ht = 1 mm
// when a height is given (common practice). σ_z = σ_zen of the profile.
// Sources: Torge, W. & Müller, J. (2012) Geodesy, 4th ed., de Gruyter, §5.3
// (trigonometric heighting, coefficient of refraction), doi:10.1515/9783110250008;
// Kahmen, H. & Faig, W. (1988) Surveying, de Gruyter, ch. 11 — both from memory.

import { zenithSigma } from '../sigma'
import { baseChecks } from './common'
import type { ObservationModel } from './types'

/** σ of measuring an instrument or target height (common practice), metres */
export const HEIGHT_OF_INSTRUMENT_SIGMA = 0.001

export const zenith: ObservationModel<'zenith'> = {
  kind: 'zenith',
  label: 'zenith angle',
  quantity: 'angle',
  network: 'height',
  validate(o) {
    const issues = baseChecks(o)
    if (Number.isFinite(o.value) && !(o.value > 0 && o.value < Math.PI)) issues.push({ column: 'value', message: 'a zenith angle must lie between 0 and 180°' })
    return issues
  },
  stations: (o) => [o.at, o.to],
  profileSigma: (_o, ctx) => zenithSigma(ctx.profile),
}
