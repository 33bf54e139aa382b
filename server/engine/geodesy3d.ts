// Earth-centred geometry for the combined 3D adjustment (./network3d): geodetic
// ↔ Earth-centred Earth-fixed (ECEF) coordinates on the CRS's ellipsoid, the
// local east/north/up frame of the ellipsoid normal, its derivatives, and the
// radii of curvature.
//
//   X = (ν + h) cos φ cos λ,  Y = (ν + h) cos φ sin λ,  Z = (ν(1 − e²) + h) sin φ
//   ν = a/W, ρ = a(1 − e²)/W³, W = √(1 − e² sin²φ)
//   ∂X/∂φ = (ρ + h)·n̂,  ∂X/∂λ = (ν + h) cos φ·ê,  ∂X/∂h = û
//   ê = (−sin λ, cos λ, 0), n̂ = (−sin φ cos λ, −sin φ sin λ, cos φ),
//   û = (cos φ cos λ, cos φ sin λ, sin φ)
//   ∂ê/∂λ = sin φ·n̂ − cos φ·û, ∂n̂/∂λ = −sin φ·ê, ∂û/∂λ = cos φ·ê,
//   ∂n̂/∂φ = −û, ∂û/∂φ = n̂, ∂ê/∂φ = 0
// ECEF → geodetic by Bowring's iteration on the reduced latitude, run to
// convergence (better than 1e-12 rad within a few steps near the Earth's surface).
// Radius of the normal section in azimuth α (Euler): 1/R = cos²α/ρ + sin²α/ν.
// Sources: Torge, W. & Müller, J. (2012) Geodesy, 4th ed., de Gruyter, §4.1–4.2
// (ellipsoidal coordinates, radii of curvature, local level frame),
// doi:10.1515/9783110250008; Bowring, B.R. (1976) Transformation from spatial
// to geographical coordinates, Survey Review 23(181), 323–327 — both from memory.

export type Vec3 = [number, number, number]

export interface Ellipsoid {
  a: number
  /** first eccentricity squared e² */
  es: number
}

/** One geodetic position with its ECEF point and local frame (computed once per iteration). */
export interface GeodeticPoint {
  lat: number
  lon: number
  h: number
  x: Vec3
  east: Vec3
  north: Vec3
  up: Vec3
  rho: number
  nu: number
  sinLat: number
  cosLat: number
}

export function radiiOf(ell: Ellipsoid, lat: number): { rho: number; nu: number } {
  const s = Math.sin(lat)
  const w2 = 1 - ell.es * s * s
  const w = Math.sqrt(w2)
  return { rho: (ell.a * (1 - ell.es)) / (w2 * w), nu: ell.a / w }
}

export function geodeticPoint(ell: Ellipsoid, lat: number, lon: number, h: number): GeodeticPoint {
  const sp = Math.sin(lat)
  const cp = Math.cos(lat)
  const sl = Math.sin(lon)
  const cl = Math.cos(lon)
  const { rho, nu } = radiiOf(ell, lat)
  return {
    lat, lon, h, rho, nu, sinLat: sp, cosLat: cp,
    x: [(nu + h) * cp * cl, (nu + h) * cp * sl, (nu * (1 - ell.es) + h) * sp],
    east: [-sl, cl, 0],
    north: [-sp * cl, -sp * sl, cp],
    up: [cp * cl, cp * sl, sp],
  }
}

export function toEcef(ell: Ellipsoid, lat: number, lon: number, h: number): Vec3 {
  return geodeticPoint(ell, lat, lon, h).x
}

/** Geodetic latitude, longitude (radians) and ellipsoidal height of an ECEF point. */
export function fromEcef(ell: Ellipsoid, p: Vec3): { lat: number; lon: number; h: number } {
  const [x, y, z] = p
  const lon = Math.atan2(y, x)
  const r = Math.hypot(x, y)
  const b = ell.a * Math.sqrt(1 - ell.es)
  const ep2 = ell.es / (1 - ell.es)
  // Bowring: reduced latitude β, then φ; iterate to convergence
  let beta = Math.atan2(z * ell.a, r * b)
  let lat = 0
  for (let i = 0; i < 10; i++) {
    const sb = Math.sin(beta)
    const cb = Math.cos(beta)
    const next = Math.atan2(z + ep2 * b * sb * sb * sb, r - ell.es * ell.a * cb * cb * cb)
    const done = Math.abs(next - lat) < 1e-14
    lat = next
    beta = Math.atan2((1 - ell.es) ** 0.5 * Math.sin(lat), Math.cos(lat))
    if (done) break
  }
  const s = Math.sin(lat)
  const nu = ell.a / Math.sqrt(1 - ell.es * s * s)
  const c = Math.cos(lat)
  // the better-conditioned formula for h by latitude
  const h = Math.abs(c) > 0.1 ? r / c - nu : z / s - nu * (1 - ell.es)
  return { lat, lon, h }
}

/** Components of an ECEF vector in the local east, north, up of a point. */
export function toEnu(p: GeodeticPoint, d: Vec3): Vec3 {
  return [dot(p.east, d), dot(p.north, d), dot(p.up, d)]
}

/** Radius of the normal section in azimuth α at a point (Euler's theorem). */
export function normalSectionRadius(p: GeodeticPoint, alpha: number): number {
  const c = Math.cos(alpha)
  const s = Math.sin(alpha)
  return 1 / ((c * c) / p.rho + (s * s) / p.nu)
}

export function dot(a: ArrayLike<number>, b: ArrayLike<number>): number {
  return a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

export function sub(a: Vec3, b: Vec3): Vec3 {
  return [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}
