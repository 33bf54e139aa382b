// An independent 3D truth generator for engine tests. It never calls the engine
// and never uses the engine's reductions: it places stations on the ellipsoid
// and "measures" in Earth-centred, Earth-fixed (ECEF) space, as an instrument
// would.
//
// Method (named so that a reader can check it):
// - Stations are given in a projected CRS (grid E, N) with orthometric heights H;
//   proj4's inverse gives longitude and latitude, h = H + N (one geoid
//   separation). proj4's '+proj=geocent' conversion gives ECEF X, Y, Z.
// - The instrument point is the mark raised by hi along the ellipsoid normal
//   (same longitude and latitude, h + hi); the target point likewise by ht.
// - Slope distance: the ECEF chord |P₂ − P₁| between instrument and target points.
// - Direction: the azimuth of P₂ − P₁ in the local horizon of the instrument
//   (east = (−sin λ, cos λ, 0), north = (−sin φ cos λ, −sin φ sin λ, cos φ),
//   up = the ellipsoid normal), minus the set's orientation.
// - Azimuth: the same local-horizon azimuth, without orientation.
// - Zenith: the angle between the normal and P₂ − P₁, less the refraction angle
//   k·S/(2R), R the radius of curvature of the normal section in the line's
//   azimuth at the instrument (Euler: 1/R = cos²α/ρ + sin²α/ν), α from
//   GeographicLib's inverse geodesic problem.
// - The geodesic length between the marks on the ellipsoid (GeographicLib,
//   Karney 2013, doi:10.1007/s00190-012-0578-z) is recorded per line for checks
//   of the distance reduction.
// Tools: proj4 (projection and ECEF), geographiclib-geodesic (geodesics).
import proj4 from 'proj4'
import { Geodesic } from 'geographiclib-geodesic'
import type { ControlRecord, ObservationRecord } from '../../../server/engine/types'

const D2R = Math.PI / 180

export interface TruthStation {
  name: string
  east: number
  north: number
  /** orthometric height H (ellipsoidal h = H + geoid separation) */
  height: number
}

export interface TruthSetup {
  at: string
  /** instrument height above the mark, metres */
  hi: number
  /** orientation of the circle (radians): direction = azimuth − orientation */
  orientation: number
  targets: { to: string; ht: number }[]
}

export interface TruthOptions {
  proj4: string
  /** ellipsoid semi-major axis and flattening (for GeographicLib) */
  a: number
  f: number
  geoidSeparation: number
  refractionK: number
  /** a-priori σ written on the rows (metres, radians) */
  sigma?: { distance: number; direction: number; zenith: number }
}

export interface TruthLine {
  at: string
  to: string
  slope: number
  /** geodesic length between the marks on the ellipsoid (GeographicLib) */
  geodesic: number
  /** geodesic azimuth at the instrument mark, radians (GeographicLib) */
  geodesicAzimuth: number
  horizonAzimuth: number
  zenithGeometric: number
  zenithObserved: number
}

export function ecef(def: string, lonDeg: number, latDeg: number, h: number): [number, number, number] {
  const ellps = /\+ellps=(\S+)/.exec(def)?.[1] ?? 'GRS80'
  const datum = /\+datum=(\S+)/.exec(def)?.[1]
  const geo = datum ? `+proj=longlat +datum=${datum} +no_defs` : `+proj=longlat +ellps=${ellps} +no_defs`
  const cart = datum ? `+proj=geocent +datum=${datum} +units=m +no_defs` : `+proj=geocent +ellps=${ellps} +units=m +no_defs`
  const p = proj4(geo, cart).forward([lonDeg, latDeg, h]) as number[]
  return [p[0], p[1], p[2]]
}

/** Noise-free 3D observations of the given set-ups, as records for the engine. */
export function generate3d(stations: TruthStation[], setups: TruthSetup[], opt: TruthOptions) {
  const byName = new Map(stations.map((s) => [s.name, s]))
  const geo = new Map<string, { lon: number; lat: number; h: number }>()
  for (const s of stations) {
    const [lon, lat] = proj4(opt.proj4).inverse([s.east, s.north])
    geo.set(s.name, { lon, lat, h: s.height + opt.geoidSeparation })
  }
  const es = opt.f * (2 - opt.f)
  const geod = new Geodesic.Geodesic(opt.a, opt.f)
  const sg = opt.sigma ?? { distance: 0.002, direction: (2 / 3600) * D2R, zenith: (4 / 3600) * D2R }
  const observations: ObservationRecord[] = []
  const lines: TruthLine[] = []
  let line = 100
  for (const su of setups) {
    const g1 = geo.get(su.at)!
    const p1 = ecef(opt.proj4, g1.lon, g1.lat, g1.h + su.hi)
    const phi = g1.lat * D2R
    const lam = g1.lon * D2R
    const east = [-Math.sin(lam), Math.cos(lam), 0]
    const north = [-Math.sin(phi) * Math.cos(lam), -Math.sin(phi) * Math.sin(lam), Math.cos(phi)]
    const up = [Math.cos(phi) * Math.cos(lam), Math.cos(phi) * Math.sin(lam), Math.sin(phi)]
    const w = Math.sqrt(1 - es * Math.sin(phi) ** 2)
    const rho = (opt.a * (1 - es)) / w ** 3
    const nu = opt.a / w
    for (const t of su.targets) {
      if (!byName.has(t.to)) throw new Error(`truth3d: unknown target ${t.to}`)
      const g2 = geo.get(t.to)!
      const p2 = ecef(opt.proj4, g2.lon, g2.lat, g2.h + t.ht)
      const d = [p2[0] - p1[0], p2[1] - p1[1], p2[2] - p1[2]]
      const S = Math.hypot(d[0], d[1], d[2])
      const dot = (u: number[]) => u[0] * d[0] + u[1] * d[1] + u[2] * d[2]
      let az = Math.atan2(dot(east), dot(north))
      if (az < 0) az += 2 * Math.PI
      const zg = Math.acos(dot(up) / S)
      const inv = geod.Inverse(g1.lat, g1.lon, g2.lat, g2.lon)
      const alpha = inv.azi1! * D2R
      const R = 1 / (Math.cos(alpha) ** 2 / rho + Math.sin(alpha) ** 2 / nu)
      const zObs = zg - (opt.refractionK * S) / (2 * R)
      let dir = (az - su.orientation) % (2 * Math.PI)
      if (dir < 0) dir += 2 * Math.PI
      const base = { from: null, hi: su.hi, ht: t.ht, set: `${su.at}-1`, lengthKm: null, note: '' }
      observations.push({ ...base, line: line++, kind: 'direction', at: su.at, to: t.to, value: dir, sigma: sg.direction })
      observations.push({ ...base, line: line++, kind: 'slope_distance', at: su.at, to: t.to, value: S, sigma: sg.distance })
      observations.push({ ...base, line: line++, kind: 'zenith', at: su.at, to: t.to, value: zObs, sigma: sg.zenith })
      lines.push({ at: su.at, to: t.to, slope: S, geodesic: inv.s12!, geodesicAzimuth: alpha, horizonAzimuth: az, zenithGeometric: zg, zenithObserved: zObs })
    }
  }
  return { observations, lines, geographic: geo }
}

/** Fixed control records (E, N, H) of the named stations. */
export function controlsOf(stations: TruthStation[], names: string[]): ControlRecord[] {
  return names.map((n, i) => {
    const s = stations.find((x) => x.name === n)!
    return { line: i + 1, station: n, east: s.east, north: s.north, height: s.height, sdEast: null, sdNorth: null, sdHeight: null }
  })
}

/**
 * An invented mountain network in UTM zone 33 N about 150 km east of the
 * central meridian (15° E) near 47° N: lines 1.5–6.9 km, height differences to
 * 550 m. Every station sees its neighbours; each set-up has its own orientation.
 */
export function mountainNetwork() {
  const def = '+proj=utm +zone=33 +ellps=GRS80 +units=m +no_defs'
  const [e0, n0] = proj4(def).forward([16.97, 47.0])
  const rel: [string, number, number, number][] = [
    ['A', 0, 0, 820.31],
    ['B', 5200, 900, 1240.55],
    ['C', 6100, 5600, 1370.12],
    ['D', 1300, 6300, 960.48],
    ['E', 3100, 3000, 1350.07],
    ['F', -800, 3300, 1030.9],
    ['G', 4300, 2100, 1210.66],
  ]
  const stations: TruthStation[] = rel.map(([name, de, dn, h]) => ({ name, east: e0 + de, north: n0 + dn, height: h }))
  const links: [string, string][] = [
    ['A', 'B'], ['B', 'C'], ['C', 'D'], ['D', 'A'], ['A', 'E'], ['B', 'E'], ['C', 'E'], ['D', 'E'],
    ['F', 'A'], ['F', 'D'], ['F', 'E'], ['E', 'G'], ['B', 'G'], ['A', 'G'], ['B', 'D'], ['C', 'G'],
  ]
  const neighbours = new Map<string, string[]>()
  for (const [a, b] of links) {
    neighbours.set(a, [...(neighbours.get(a) ?? []), b])
    neighbours.set(b, [...(neighbours.get(b) ?? []), a])
  }
  const setups: TruthSetup[] = stations.map((s, i) => ({
    at: s.name,
    hi: 1.45 + 0.037 * i,
    orientation: ((37 + 53 * i) % 360) * D2R,
    targets: neighbours.get(s.name)!.map((to, j) => ({ to, ht: 1.3 + 0.11 * ((i + j) % 6) })),
  }))
  return { def, stations, setups, a: 6378137, f: 1 / 298.257222101 }
}

/**
 * ECEF positions (m) of the marks (or of points `above` metres up the normal),
 * for tests that need 3D vectors directly — e.g. GNSS baselines ΔX, ΔY, ΔZ.
 */
export function ecefOfStations(stations: TruthStation[], opt: Pick<TruthOptions, 'proj4' | 'geoidSeparation'>, above: (name: string) => number = () => 0) {
  const out = new Map<string, [number, number, number]>()
  for (const s of stations) {
    const [lon, lat] = proj4(opt.proj4).inverse([s.east, s.north])
    out.set(s.name, ecef(opt.proj4, lon, lat, s.height + opt.geoidSeparation + above(s.name)))
  }
  return out
}
