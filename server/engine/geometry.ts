// Plane geometry in grid coordinates: azimuths clockwise from grid north,
// angle wrapping, unit conversions at the edges and error ellipses from a 2×2
// cofactor block (eigen-decomposition in closed form).
//
// Source for the ellipse formulas: Ghilani, C.D. (2017) Adjustment Computations:
// Spatial Data Analysis, 6th ed., Wiley, chapter 19 "Error ellipse" (from memory):
// σ²_max,min = (qEE + qNN)/2 ± √(((qNN − qEE)/2)² + qEN²), tan 2t = 2qEN/(qNN − qEE).

export const RHO_ARCSEC = (180 * 3600) / Math.PI
export const RAD_TO_DEG = 180 / Math.PI
export const TWO_PI = 2 * Math.PI

/** Grid azimuth from point 1 to point 2 in [0, 2π). */
export function azimuth(e1: number, n1: number, e2: number, n2: number): number {
  const a = Math.atan2(e2 - e1, n2 - n1)
  return a < 0 ? a + TWO_PI : a
}

/** Wraps an angle difference to (−π, π]. */
export function wrapPi(a: number): number {
  let x = a % TWO_PI
  if (x > Math.PI) x -= TWO_PI
  else if (x <= -Math.PI) x += TWO_PI
  return x
}

export function wrap2Pi(a: number): number {
  const x = a % TWO_PI
  return x < 0 ? x + TWO_PI : x
}

export interface EllipseAxes {
  semiMajor: number
  semiMinor: number
  azimuthDeg: number
}

/** Ellipse of a 2×2 covariance (already scaled), axes multiplied by `scale`. */
export function ellipseFromCovariance(qee: number, qnn: number, qen: number, scale = 1): EllipseAxes {
  const mean = (qee + qnn) / 2
  const rad = Math.hypot((qnn - qee) / 2, qen)
  const l1 = Math.max(mean + rad, 0)
  const l2 = Math.max(mean - rad, 0)
  let t = 0.5 * Math.atan2(2 * qen, qnn - qee) * RAD_TO_DEG
  if (t < 0) t += 180
  if (t >= 180) t -= 180
  return { semiMajor: scale * Math.sqrt(l1), semiMinor: scale * Math.sqrt(l2), azimuthDeg: rad === 0 ? 0 : t }
}
