// The Earth under the plane: reductions of measured (3D, ground) observations to
// the plane in which the network is adjusted.
//
// Two surfaces:
// - a projected CRS (proj4 definition): the ellipsoid of the projection. Station
//   positions are grid (E, N); ellipsoidal height h = H + N_geoid (one geoid
//   separation for the network).
// - a local plane: a sphere of radius 6 371 000 m (common practice) with the
//   plane tangent at the project height (or at each line's mean mark height).
//
// Distances (slope S with zenith z, or with the heights of both ends). On the
// sphere of radius R = R_α osculating the normal section at the instrument,
// with the instrument point at height h₁ (mark + hi) and the geometric zenith
// z_g = z + k·S/(2R) (refraction angle, k the coefficient of refraction):
//   R + h₂ = √((R + h₁)² + S² + 2(R + h₁)·S·cos z_g)
//   ψ = atan2(S·sin z_g, R + h₁ + S·cos z_g),  ellipsoidal arc s = R·ψ
// and the height difference of the two points h₂ − h₁ (the trigonometric height
// without the (1 − k)·D²/2R series). With both heights known instead:
//   c₀ = √((S² − Δh²)/((1 + h₁/R)(1 + h₂/R))),  s = 2R·asin(c₀/2R).
// Horizontal distances D are taken as measured at the mean mark height h̄:
// s = D·R/(R + h̄). R_α by Euler's theorem 1/R_α = cos²α/ρ + sin²α/ν.
// (Rüeger, J.M. (1996) Electronic Distance Measurement, 4th ed., Springer,
// ch. 12 "Reduction of distances", doi:10.1007/978-3-642-80233-1; Torge, W. &
// Müller, J. (2012) Geodesy, 4th ed., de Gruyter, §6.2, doi:10.1515/9783110250008
// — both from memory.)
//
// Grid: s is carried to the grid by the line scale factor (Simpson's rule over
// the point scale factor, ./grid). Directions get
//   - the arc-to-chord correction (t − T) at the instrument, from the curvature
//     of the projected geodesic: for a conformal projection with point scale k
//     the image of a geodesic bends towards smaller k with curvature
//     κ = −∂ln k/∂n (n the unit normal to its left), so
//       t − T = ∫₀ᴸ (L − x)/L·κ(x) dx ≈ −L/6·(g₁ + 2g_m),  g = ∂ln k/∂n,
//     evaluated by finite differences of the projection's own scale factor
//     (Snyder, J.P. (1987) Map Projections — A Working Manual, USGS PP 1395,
//     doi:10.3133/pp1395, §8 on conformality; the integral is the small-curvature
//     form of the deflection of a curve from its chord — from memory);
//   - the target-height (skew-normal) correction
//       δ_h = e′²·h₂/(2ν₂)·cos²φ₂·sin 2α
//     and the normal-section-to-geodesic correction
//       δ_g = −e′²·s²/(12ν₁²)·cos²φ₁·sin 2α
//     (Vaníček, P. & Krakiwsky, E.J. (1986) Geodesy: the Concepts, 2nd ed.,
//     North-Holland, §17.5 — from memory).
// Azimuths (clockwise from the ellipsoidal north at the instrument) also get the
// grid convergence c, the grid bearing of north, taken from the projection by
// differencing along the meridian: T = α + c − (t − T) + δ_h + δ_g.
//
// Out of scope: deflection of the vertical (plumb line = ellipsoid normal), a
// geoid that varies across the network, the correlation between the plane and
// the height use of one slope distance.

import { azimuth } from './geometry'
import { GridProjection } from './grid'

/** Mean Earth radius of a local plane (common practice). */
export const LOCAL_RADIUS = 6_371_000
/** finite-difference offset across a line for ∂ln k/∂n (metres on the grid) */
const NORMAL_STEP = 500
/** finite-difference step along a meridian for the convergence (radians) */
const MERIDIAN_STEP = 1e-6

/** One surface: a projected CRS on its ellipsoid, or a local plane on a sphere. */
export interface Surface {
  readonly projected: boolean
  /** radius of the normal section at grid point 1 towards grid point 2 (metres) */
  radiusAlong(e1: number, n1: number, e2: number, n2: number): number
  /** grid length of an ellipsoidal arc s between two grid points (with a local plane: the arc at the project height) */
  gridFactor(e1: number, n1: number, e2: number, n2: number): number
  /**
   * reduction of a direction observed at point 1 to point 2 (target height h2
   * above the ellipsoid) to the grid chord: reduced = observed + this
   */
  directionCorrection(e1: number, n1: number, e2: number, n2: number, targetHeight: number): number
  /** reduction of an azimuth observed at point 1 to the grid bearing of the chord: T = observed + this */
  azimuthCorrection(e1: number, n1: number, e2: number, n2: number, targetHeight: number): number
}

export class ProjectedSurface implements Surface {
  readonly projected = true
  private readonly e2p: number

  constructor(
    readonly proj: GridProjection,
    readonly method: 'simpson' | 'midpoint' = 'simpson',
  ) {
    this.e2p = proj.es / (1 - proj.es)
  }

  radiusAlong(e1: number, n1: number, e2: number, n2: number): number {
    const g = this.proj.toGeographic(e1, n1)
    const a = this.geodeticAzimuthApprox(e1, n1, e2, n2, g)
    const { rho, nu } = this.proj.radii(g.lat)
    return 1 / (Math.cos(a) ** 2 / rho + Math.sin(a) ** 2 / nu)
  }

  gridFactor(e1: number, n1: number, e2: number, n2: number): number {
    return this.proj.lineScale(e1, n1, e2, n2, this.method)
  }

  /** grid bearing of the ellipsoidal north at a grid point (convergence) */
  convergence(e: number, n: number): number {
    const g = this.proj.toGeographic(e, n)
    const up = this.proj.toGrid(g.lon, g.lat + MERIDIAN_STEP)
    const dn = this.proj.toGrid(g.lon, g.lat - MERIDIAN_STEP)
    return Math.atan2(up.e - dn.e, up.n - dn.n)
  }

  private readonly arcCache = new Map<string, number>()

  /** arc-to-chord correction (t − T) at point 1 of the line 1 → 2 (kept per line: the report asks again) */
  arcToChord(e1: number, n1: number, e2: number, n2: number): number {
    const key = `${e1},${n1},${e2},${n2}`
    const hit = this.arcCache.get(key)
    if (hit !== undefined) return hit
    const t = this.computeArcToChord(e1, n1, e2, n2)
    this.arcCache.set(key, t)
    return t
  }

  private computeArcToChord(e1: number, n1: number, e2: number, n2: number): number {
    const de = e2 - e1
    const dn = n2 - n1
    const L = Math.hypot(de, dn)
    if (L === 0) return 0
    // unit normal to the left of the line (E, N right-handed)
    const le = -dn / L
    const ln = de / L
    const g = (e: number, n: number) => {
      const kp = this.proj.scaleAtGrid(e + NORMAL_STEP * le, n + NORMAL_STEP * ln)
      const km = this.proj.scaleAtGrid(e - NORMAL_STEP * le, n - NORMAL_STEP * ln)
      return Math.log(kp / km) / (2 * NORMAL_STEP)
    }
    return (-L / 6) * (g(e1, n1) + 2 * g((e1 + e2) / 2, (n1 + n2) / 2))
  }

  private geodeticAzimuthApprox(e1: number, n1: number, e2: number, n2: number, g1 = this.proj.toGeographic(e1, n1)): number {
    return azimuth(e1, n1, e2, n2) - this.convergence(e1, n1)
  }

  /** δ_h + δ_g: target-height and normal-section-to-geodesic corrections (radians) */
  private ellipsoidalTerms(e1: number, n1: number, e2: number, n2: number, targetHeight: number): number {
    const g1 = this.proj.toGeographic(e1, n1)
    const g2 = this.proj.toGeographic(e2, n2)
    const a = this.geodeticAzimuthApprox(e1, n1, e2, n2, g1)
    const nu1 = this.proj.radii(g1.lat).nu
    const nu2 = this.proj.radii(g2.lat).nu
    const s = Math.hypot(e2 - e1, n2 - n1)
    const dh = ((this.e2p * targetHeight) / (2 * nu2)) * Math.cos(g2.lat) ** 2 * Math.sin(2 * a)
    const dg = -((this.e2p * s * s) / (12 * nu1 * nu1)) * Math.cos(g1.lat) ** 2 * Math.sin(2 * a)
    return dh + dg
  }

  directionCorrection(e1: number, n1: number, e2: number, n2: number, targetHeight: number): number {
    return this.ellipsoidalTerms(e1, n1, e2, n2, targetHeight) - this.arcToChord(e1, n1, e2, n2)
  }

  azimuthCorrection(e1: number, n1: number, e2: number, n2: number, targetHeight: number): number {
    return this.convergence(e1, n1) + this.directionCorrection(e1, n1, e2, n2, targetHeight)
  }
}

/** A local plane: a sphere of radius R; distances at the project height (or at each line's mean mark height). */
export class LocalSurface implements Surface {
  readonly projected = false
  constructor(
    readonly radius = LOCAL_RADIUS,
    /** the plane's height; null = each line at the mean height of its marks */
    readonly projectHeight: number | null = null,
  ) {}

  radiusAlong(): number {
    return this.radius
  }

  gridFactor(): number {
    return 1
  }

  directionCorrection(): number {
    return 0
  }

  azimuthCorrection(): number {
    return 0
  }
}

/** A slope distance reduced on the sphere of radius R from the instrument point (height h1) with its zenith angle. */
export function reduceSlopeWithZenith(S: number, zenith: number, h1: number, R: number, k: number): { arc: number; dh: number } {
  const zg = zenith + (k * S) / (2 * R)
  const r1 = R + h1
  const x = S * Math.sin(zg)
  const y = r1 + S * Math.cos(zg)
  const psi = Math.atan2(x, y)
  return { arc: R * psi, dh: Math.hypot(x, y) - r1 }
}

/** A slope distance between points at heights h1 and h2 reduced to the ellipsoidal arc on the sphere of radius R. */
export function reduceSlopeWithHeights(S: number, h1: number, h2: number, R: number): number | null {
  const dh = h2 - h1
  const q = (S * S - dh * dh) / ((1 + h1 / R) * (1 + h2 / R))
  if (!(q > 0)) return null
  const c0 = Math.sqrt(q)
  return 2 * R * Math.asin(c0 / (2 * R))
}
