// Projection access for the reductions of ./geodesy: grid ↔ geographic, radii
// of curvature and the point scale factor of a projected CRS. (The reductions
// themselves — slope and horizontal distances to the grid, directions and
// azimuths to grid chords — are in ./geodesy and ./reduce.)
//
//   D_grid = D_ground · R/(R + h) · k
//
// with h the ellipsoidal height of the line (station heights + geoid
// separation), R the Gaussian mean radius √(ρν) of the ellipsoid at the
// network's latitude (or a radius the caller gives), and k the point scale
// factor of the projection averaged along the line by Simpson's rule
// (k₁ + 4k_m + k₂)/6, or taken at the mid-point. R/(R + h) is the elevation
// factor, the product the combined factor (common practice; e.g. Ghilani, C.D.
// (2017) Adjustment Computations, 6th ed., Wiley, ch. on map projections — from
// memory). The chord–arc difference of survey-length lines (< 1e-9 relative at
// 1 km) is neglected.
//
// The point scale factor comes from the projection itself (proj4) by central
// finite differences of the forward mapping on its own ellipsoid: the scale
// along the parallel ‖∂(E,N)/∂λ‖/(ν·cos φ) and along the meridian
// ‖∂(E,N)/∂φ‖/ρ, which are equal for a conformal projection; their geometric
// mean is used. With a step of 1e-6 rad the truncation and rounding errors are
// both near 1e-11 relative. Radii of curvature ρ = a(1 − e²)/W³, ν = a/W,
// W = √(1 − e² sin²φ): Snyder, J.P. (1987) Map Projections — A Working Manual,
// USGS Professional Paper 1395, eqs. 4-18 and 4-20 (from memory).

import proj4 from 'proj4'

export interface ProjectionSpec {
  /** proj4 definition of the projected CRS the control coordinates are in */
  proj4: string
  /** geoid separation N (ellipsoidal = orthometric + N), one value for the network; default 0 */
  geoidSeparationM?: number
  /** point scale factor along the line: Simpson's rule (default) or at the mid-point */
  scaleFactorMethod?: 'simpson' | 'midpoint'
}

interface RawProjection {
  forward(p: { x: number; y: number }): { x: number; y: number }
  inverse(p: { x: number; y: number }): { x: number; y: number }
  a: number
  es: number
  projName?: string
}

const STEP = 1e-6

/** A projection ready for scale factors; plane coordinates in metres (false origin included). */
export class GridProjection {
  private readonly p: RawProjection
  readonly a: number
  readonly es: number

  constructor(definition: string) {
    let p: RawProjection
    try {
      p = proj4.Proj(definition) as unknown as RawProjection
    } catch (e) {
      throw new Error(`the proj4 definition could not be read (${e instanceof Error ? e.message : String(e)})`)
    }
    if (!p || typeof p.forward !== 'function' || !(p.a > 0)) throw new Error('the proj4 definition could not be read')
    if (p.projName === 'longlat' || p.projName === 'identity') {
      throw new Error('the CRS is geographic (longitude, latitude): a plane adjustment needs a projected CRS')
    }
    this.p = p
    this.a = p.a
    this.es = p.es || 0
  }

  /** Geographic position (radians) of a grid point. */
  toGeographic(e: number, n: number): { lon: number; lat: number } {
    const g = this.p.inverse({ x: e, y: n })
    if (!g || !Number.isFinite(g.x) || !Number.isFinite(g.y)) throw new Error(`grid point (${e.toFixed(3)}, ${n.toFixed(3)}) lies outside the projection`)
    return { lon: g.x, lat: g.y }
  }

  /** Grid coordinates (metres) of a geographic position in radians. */
  toGrid(lon: number, lat: number): { e: number; n: number } {
    const q = this.p.forward({ x: lon, y: lat })
    return { e: q.x, n: q.y }
  }

  /** ρ (meridian) and ν (prime vertical) radii of curvature at latitude φ. */
  radii(lat: number): { rho: number; nu: number } {
    const s = Math.sin(lat)
    const w2 = 1 - this.es * s * s
    const w = Math.sqrt(w2)
    return { rho: (this.a * (1 - this.es)) / (w2 * w), nu: this.a / w }
  }

  /** Gaussian mean radius √(ρν) at latitude φ. */
  gaussianRadius(lat: number): number {
    const { rho, nu } = this.radii(lat)
    return Math.sqrt(rho * nu)
  }

  /** Point scale factor k at a geographic position (radians), by central differences. */
  scaleAt(lon: number, lat: number): number {
    const f = (x: number, y: number) => this.p.forward({ x, y })
    const e1 = f(lon + STEP, lat)
    const e0 = f(lon - STEP, lat)
    const n1 = f(lon, lat + STEP)
    const n0 = f(lon, lat - STEP)
    const { rho, nu } = this.radii(lat)
    const meridian = Math.hypot(n1.x - n0.x, n1.y - n0.y) / (2 * STEP) / rho
    const cosLat = Math.cos(lat)
    // near a pole the parallel scale is 0/0; the meridian scale alone is then used
    if (cosLat < 1e-6) return meridian
    const parallel = Math.hypot(e1.x - e0.x, e1.y - e0.y) / (2 * STEP) / (nu * cosLat)
    return Math.sqrt(parallel * meridian)
  }

  /** Point scale factor at a grid point. */
  scaleAtGrid(e: number, n: number): number {
    const g = this.toGeographic(e, n)
    return this.scaleAt(g.lon, g.lat)
  }

  /** Scale factor of a line: Simpson's rule over its ends and mid-point, or the mid-point alone. */
  lineScale(e1: number, n1: number, e2: number, n2: number, method: 'simpson' | 'midpoint' = 'simpson'): number {
    const km = this.scaleAtGrid((e1 + e2) / 2, (n1 + n2) / 2)
    if (method === 'midpoint') return km
    return (this.scaleAtGrid(e1, n1) + 4 * km + this.scaleAtGrid(e2, n2)) / 6
  }
}

/** Elevation factor R/(R + h) for ellipsoidal height h. */
export function elevationFactor(radiusM: number, ellipsoidalHeightM: number): number {
  return radiusM / (radiusM + ellipsoidalHeightM)
}
