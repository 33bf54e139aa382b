// Grid and ground: point scale factors from proj4 by finite differences against
// a published worked example and closed forms, and a UTM network whose ground
// distances must be reduced to the grid to fit its control.
import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import proj4 from 'proj4'
import { elevationFactor, GridProjection } from '../../../server/engine/grid'
import { adjustNetwork, formatReport, type AdjustmentResult, type ObservationRecord } from '../../../server/engine/index'
import { ARC, az, fixed, obs } from './helpers'

const D2R = Math.PI / 180

/**
 * Transverse Mercator point scale factor on the ellipsoid, series form:
 * k = k0·[1 + (1 + C)A²/2 + (5 − 4T + 42C + 13C² − 28e′²)A⁴/24 + (61 − 148T + 16T²)A⁶/720],
 * T = tan²φ, C = e′²cos²φ, A = (λ − λ0)cos φ — Snyder (1987) Map Projections — A
 * Working Manual, USGS PP 1395, eq. 8-11 (from memory).
 */
function snyderTmK(latRad: number, dLonRad: number, k0: number, es: number): number {
  const ep2 = es / (1 - es)
  const T = Math.tan(latRad) ** 2
  const C = ep2 * Math.cos(latRad) ** 2
  const A = dLonRad * Math.cos(latRad)
  return k0 * (1 + ((1 + C) * A ** 2) / 2 + ((5 - 4 * T + 42 * C + 13 * C * C - 28 * ep2) * A ** 4) / 24 + ((61 - 148 * T + 16 * T * T) * A ** 6) / 720)
}

describe('point scale factor of a projection (proj4, central differences)', () => {
  it('Snyder (1987) USGS PP 1395, numerical example for the ellipsoidal Transverse Mercator: Clarke 1866, λ0 = 75°W, k0 = 0.9996, φ = 40°30′N, λ = 73°30′W gives x = 127 106.5 m, y = 4 484 124.4 m, k = 0.9997989 (values from memory)', () => {
    const p = new GridProjection('+proj=tmerc +lat_0=0 +lon_0=-75 +k_0=0.9996 +x_0=0 +y_0=0 +ellps=clrk66 +units=m +no_defs')
    const g = p.toGrid(-73.5 * D2R, 40.5 * D2R)
    expect(g.e).toBeCloseTo(127106.5, 0)
    expect(g.n).toBeCloseTo(4484124.4, 0)
    expect(Math.abs(p.scaleAt(-73.5 * D2R, 40.5 * D2R) - 0.9997989)).toBeLessThan(1e-7)
  })

  it('property: on the sphere k equals the closed form k0/√(1 − B²), B = cos φ·sin(λ − λ0) (Snyder 1987, eqs. 8-1 and 8-4, from memory) to 1e-9', () => {
    const p = new GridProjection('+proj=tmerc +lat_0=0 +lon_0=15 +k_0=0.9996 +x_0=500000 +y_0=0 +R=6371000 +approx +units=m')
    fc.assert(
      // away from the equator: proj4's spherical formula takes the northing from
      // acos(·) of a value near 1 there, which loses half the digits (not ours to fix)
      fc.property(fc.double({ min: 5, max: 80, noNaN: true }), fc.boolean(), fc.double({ min: -10, max: 10, noNaN: true }), (absLat, south, dLon) => {
        const lat = south ? -absLat : absLat
        const B = Math.cos(lat * D2R) * Math.sin(dLon * D2R)
        const k = 0.9996 / Math.sqrt(1 - B * B)
        expect(Math.abs(p.scaleAt((15 + dLon) * D2R, lat * D2R) / k - 1)).toBeLessThan(1e-9)
      }),
      { numRuns: 200 },
    )
  })

  it('property: on GRS80 inside a UTM zone (|λ − λ0| ≤ 3°) k equals the closed-form series of Snyder eq. 8-11 to 1e-9', () => {
    const p = new GridProjection('+proj=utm +zone=33 +ellps=GRS80 +units=m +no_defs')
    fc.assert(
      fc.property(fc.double({ min: -80, max: 84, noNaN: true }), fc.double({ min: -3, max: 3, noNaN: true }), (lat, dLon) => {
        const k = snyderTmK(lat * D2R, dLon * D2R, 0.9996, p.es)
        expect(Math.abs(p.scaleAt((15 + dLon) * D2R, lat * D2R) - k)).toBeLessThan(1e-9)
      }),
      { numRuns: 200 },
    )
  })

  it('Gaussian mean radius √(ρν) is b on the equator and a²/b at the pole (identities of the ellipsoid, Snyder eqs. 4-18, 4-20)', () => {
    const p = new GridProjection('+proj=utm +zone=33 +ellps=GRS80 +units=m +no_defs')
    const b = p.a * Math.sqrt(1 - p.es)
    expect(p.a).toBe(6378137)
    expect(Math.abs(p.gaussianRadius(0) / b - 1)).toBeLessThan(1e-15)
    expect(Math.abs(p.gaussianRadius(Math.PI / 2) / ((p.a * p.a) / b) - 1)).toBeLessThan(1e-15)
  })

  it('elevation factor R/(R + h): 1000 m above the ellipsoid at R = 6 371 000 m shortens by 1.5694e-4 (common practice)', () => {
    expect(elevationFactor(6_371_000, 1000)).toBeCloseTo(1 - 1000 / 6_372_000, 15)
    expect(1 - elevationFactor(6_371_000, 1000)).toBeCloseTo(1.5694e-4, 8)
  })

  it('a CRS in US survey feet works in metres inside the engine (stations are stored in metres)', () => {
    // invented Lambert conformal conic zone in US survey feet (1 ft = 1200/3937 m, US Federal
    // Register 1959 definition, from memory); proj4's own transform gives feet
    const def = '+proj=lcc +lat_1=40 +lat_2=42 +lat_0=39.5 +lon_0=-105 +x_0=600000 +y_0=300000 +ellps=GRS80 +units=us-ft +no_defs'
    const [eFt, nFt] = proj4(def).forward([-104.2, 40.7])
    const p = new GridProjection(def)
    const g = p.toGrid(-104.2 * D2R, 40.7 * D2R)
    expect(g.e).toBeCloseTo((eFt * 1200) / 3937, 6)
    expect(g.n).toBeCloseTo((nFt * 1200) / 3937, 6)
    // the scale factor does not depend on the length unit: a conformal conic's k is near 1 between its standard parallels
    expect(Math.abs(p.scaleAtGrid(g.e, g.n) - 1)).toBeLessThan(1e-3)
  })

  it('a geographic CRS or an unreadable definition is refused with a readable reason', () => {
    expect(() => new GridProjection('+proj=longlat +datum=WGS84 +no_defs')).toThrow(/geographic/)
    expect(() => new GridProjection('+proj=nosuchthing')).toThrow(/could not be read/)
  })
})

// ---- a UTM network (invented) -------------------------------------------------------

const UTM33 = '+proj=utm +zone=33 +ellps=GRS80 +units=m +no_defs'
const RADIUS = 6_381_000
const ok = (o: ReturnType<typeof adjustNetwork>): AdjustmentResult => {
  if (!o.ok) throw new Error(`${o.code}: ${o.reason}`)
  return o.result
}

/**
 * Stations about 220 km east of the zone's central meridian at 47°N and 800–900 m
 * high: k ≈ 1.0002, elevation factor ≈ 0.99987. Ground distances are made from
 * the grid truth with factors computed here independently (Snyder series for k,
 * Simpson's rule over the line, R/(R + h)).
 */
function utmNetwork() {
  const utm = proj4(UTM33)
  const [e0, n0] = utm.forward([17.9, 47.05])
  const truth = new Map<string, [number, number, number]>([
    ['A', [e0, n0, 812.4]],
    ['B', [e0 + 1480.2, n0 + 95.7, 846.1]],
    ['C', [e0 + 1612.9, n0 + 1390.4, 871.9]],
    ['D', [e0 + 120.5, n0 + 1555.8, 833.0]],
    ['E', [e0 + 790.3, n0 + 760.1, 901.7]],
  ])
  const p = new GridProjection(UTM33)
  const kAt = (e: number, n: number) => {
    const [lon, lat] = utm.inverse([e, n])
    return snyderTmK(lat * D2R, (lon - 15) * D2R, 0.9996, p.es)
  }
  const cfOf = (a: string, b: string) => {
    const [ea, na, ha] = truth.get(a)!
    const [eb, nb, hb] = truth.get(b)!
    const k = (kAt(ea, na) + 4 * kAt((ea + eb) / 2, (na + nb) / 2) + kAt(eb, nb)) / 6
    return (RADIUS / (RADIUS + (ha + hb) / 2)) * k
  }
  const lines: [string, string][] = [['A', 'B'], ['B', 'C'], ['C', 'D'], ['D', 'A'], ['A', 'E'], ['B', 'E'], ['C', 'E'], ['D', 'E']]
  const observations: ObservationRecord[] = []
  let line = 10
  for (const [a, b] of lines) {
    const [ea, na] = truth.get(a)!
    const [eb, nb] = truth.get(b)!
    const grid = Math.hypot(eb - ea, nb - na)
    observations.push(obs({ line: line++, kind: 'horizontal_distance', at: a, to: b, value: grid / cfOf(a, b), sigma: 0.002 }))
    observations.push(obs({ line: line++, kind: 'direction', at: a, to: b, value: az([ea, na], [eb, nb]), sigma: 2 * ARC }))
    observations.push(obs({ line: line++, kind: 'direction', at: b, to: a, value: az([eb, nb], [ea, na]), sigma: 2 * ARC }))
  }
  // one slope distance with its zenith angle (E → A): ground horizontal = S·sin z
  const [ee, ne, he] = truth.get('E')!
  const [ea, na, ha] = truth.get('A')!
  const horiz = Math.hypot(ea - ee, na - ne) / cfOf('E', 'A')
  const zen = Math.atan2(horiz, ha - he)
  observations.push(obs({ line: line++, kind: 'slope_distance', at: 'E', to: 'A', value: horiz / Math.sin(zen), sigma: 0.002 }))
  observations.push(obs({ line: line++, kind: 'zenith', at: 'E', to: 'A', value: zen }))
  const controls = ['A', 'C'].map((s, i) => ({ ...fixed(s, truth.get(s)![0], truth.get(s)![1], truth.get(s)![2]), line: i + 1 }))
  const approximate = ['B', 'D', 'E'].map((s) => ({ station: s, height: truth.get(s)![2] }))
  return { truth, observations, controls, approximate, cfOf }
}

describe('UTM-projected network: ground distances reduced to the grid', () => {
  const net = utmNetwork()
  const input = { controls: net.controls, observations: net.observations, approximate: net.approximate }
  const projected = ok(adjustNetwork({ ...input, projection: { proj4: UTM33, meanRadiusM: RADIUS } }))
  const local = ok(adjustNetwork(input))

  it('each distance carries the combined factor computed independently (1e-9)', () => {
    for (const o of projected.observations) {
      if (o.kind !== 'horizontal_distance' && o.kind !== 'slope_distance') continue
      expect(Math.abs(o.combinedFactor! - net.cfOf(o.at, o.to))).toBeLessThan(1e-9)
      expect(o.combinedFactor!).toBeCloseTo(o.elevationFactor! * o.scaleFactor!, 15)
    }
    expect(projected.observations.filter((o) => o.kind === 'direction').every((o) => o.combinedFactor === undefined)).toBe(true)
  })

  it('the summary reports the reduction: scale factor above 1 this far from the central meridian, elevation factor below 1', () => {
    const g = projected.gridReduction!
    expect(g.applied).toBe(true)
    expect(g.method).toBe('simpson')
    expect(g.distances).toBe(9)
    expect(g.radiusM).toBe(RADIUS)
    expect(g.meanScaleFactor!).toBeGreaterThan(1.0001)
    expect(g.meanElevationFactor!).toBeLessThan(0.99988)
    expect(g.minCombinedFactor!).toBeLessThanOrEqual(g.meanCombinedFactor!)
    expect(g.maxCombinedFactor!).toBeGreaterThanOrEqual(g.meanCombinedFactor!)
    expect(g.heightsAssumed).toEqual([])
  })

  it('with the reduction the adjusted coordinates meet the grid truth (0.1 mm) and residuals vanish', () => {
    for (const s of ['B', 'D', 'E']) {
      const st = projected.stations.find((x) => x.name === s)!
      expect(Math.abs(st.east! - net.truth.get(s)![0])).toBeLessThan(1e-4)
      expect(Math.abs(st.north! - net.truth.get(s)![1])).toBeLessThan(1e-4)
    }
    for (const o of projected.observations) if (o.kind === 'horizontal_distance') expect(Math.abs(o.residual!)).toBeLessThan(1e-4)
  })

  it('residuals and adjusted values stay in ground metres: adjusted ground = observed + residual', () => {
    const o = projected.observations.find((x) => x.kind === 'horizontal_distance')!
    expect(o.adjusted!).toBeCloseTo(o.observed + o.residual!, 12)
  })

  it('without a projection (local plane) nothing is reduced and the same data misfit the control by centimetres', () => {
    expect(local.gridReduction!.applied).toBe(false)
    expect(local.observations.every((o) => o.combinedFactor === undefined)).toBe(true)
    const worst = Math.max(...local.observations.filter((o) => o.kind === 'horizontal_distance').map((o) => Math.abs(o.residual!)))
    expect(worst).toBeGreaterThan(0.02)
  })

  it('mid-point rule differs from Simpson by far less than the reduction itself', () => {
    const mid = ok(adjustNetwork({ ...input, projection: { proj4: UTM33, meanRadiusM: RADIUS, scaleFactorMethod: 'midpoint' } }))
    const a = projected.observations.find((x) => x.kind === 'horizontal_distance')!
    const b = mid.observations.find((x) => x.kind === 'horizontal_distance')!
    expect(Math.abs(a.combinedFactor! - b.combinedFactor!)).toBeLessThan(1e-8)
    expect(Math.abs(a.combinedFactor! - b.combinedFactor!)).toBeGreaterThan(0)
  })

  it('a station without any height is named and the mean known height stands in', () => {
    const r = ok(adjustNetwork({ ...input, approximate: net.approximate.filter((a) => a.station !== 'D'), projection: { proj4: UTM33 } }))
    expect(r.gridReduction!.heightsAssumed).toEqual(['D'])
    expect(r.gridReduction!.radiusM!).toBeGreaterThan(6.36e6)
  })

  it('the report shows the combined factor (or says the plane is local)', () => {
    const text = formatReport(projected)
    expect(text).toContain(`Grid and ground: 9 distances reduced to the grid; combined factor mean ${projected.gridReduction!.meanCombinedFactor!.toFixed(8)}`)
    expect(formatReport(local)).toContain('Grid and ground: local plane, distances used as measured.')
  })

  it('bad projection input fails as input, naming the field', () => {
    const geo = adjustNetwork({ ...input, projection: { proj4: '+proj=longlat +datum=WGS84' } })
    expect(!geo.ok && geo.code === 'input' && /projection, field proj4: .*geographic/.test(geo.reason)).toBe(true)
    const radius = adjustNetwork({ ...input, projection: { proj4: UTM33, meanRadiusM: 100 } })
    expect(!radius.ok && /field meanRadiusM/.test(radius.reason)).toBe(true)
  })
})
