// Grid and ground: point scale factors from proj4 by finite differences against
// a published worked example and closed forms, and a UTM network whose ground
// distances must be reduced to the grid to fit its control.
import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import proj4 from 'proj4'
import { elevationFactor, GridProjection } from '../../../server/engine/grid'
import { adjustNetwork, formatReport } from '../../../server/engine/index'
import { controlsOf, generate3d, mountainNetwork } from './truth3d'
import { ok } from './helpers'

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

// ---- the reduction summary on a projected network (3D truth from ./truth3d) ----------

describe('UTM-projected network: what the reduction reports', () => {
  const net = mountainNetwork()
  const truth = generate3d(net.stations, net.setups, { proj4: net.def, a: net.a, f: net.f, geoidSeparation: 47.3, refractionK: 0.13 })
  const controls = controlsOf(net.stations, ['A', 'C'])
  const input = { controls, observations: truth.observations }
  const projected = ok(adjustNetwork({ ...input, projection: { proj4: net.def, geoidSeparationM: 47.3 } }))
  const local = ok(adjustNetwork(input))

  it('each distance carries k from Snyder\'s series (Simpson over the line, 1e-9) and cf = elevation factor × k', () => {
    const p = new GridProjection(net.def)
    const utm = proj4(net.def)
    const kAt = (e: number, n: number) => {
      const [lon, lat] = utm.inverse([e, n])
      return snyderTmK(lat * D2R, (lon - 15) * D2R, 0.9996, p.es)
    }
    for (const o of projected.observations.filter((x) => x.kind === 'slope_distance')) {
      const a = net.stations.find((s) => s.name === o.at)!
      const b = net.stations.find((s) => s.name === o.to)!
      const k = (kAt(a.east, a.north) + 4 * kAt((a.east + b.east) / 2, (a.north + b.north) / 2) + kAt(b.east, b.north)) / 6
      expect(Math.abs(o.scaleFactor! - k)).toBeLessThan(1e-9)
      expect(o.combinedFactor!).toBeCloseTo(o.elevationFactor! * o.scaleFactor!, 15)
    }
    expect(projected.observations.filter((o) => o.kind === 'direction').every((o) => o.combinedFactor === undefined)).toBe(true)
  })

  it('the summary: 150 km from the central meridian k ≈ 0.99988 (Snyder: k0(1 + x²/2R²), k0 = 0.9996), elevation factor below 1 at 0.9–1.4 km, directions reduced, arc-to-chord of the order of seconds', () => {
    const g = projected.gridReduction!
    expect(g.applied).toBe(true)
    expect(g.method).toBe('simpson')
    expect(g.distances).toBe(truth.observations.filter((o) => o.kind === 'slope_distance').length)
    expect(g.directions).toBe(truth.observations.filter((o) => o.kind === 'direction').length)
    expect(g.meanScaleFactor!).toBeGreaterThan(0.99986)
    expect(g.meanScaleFactor!).toBeLessThan(0.99992)
    expect(g.meanElevationFactor!).toBeLessThan(0.99985)
    expect(g.meanElevationFactor!).toBeGreaterThan(0.99975)
    // TM arc-to-chord (t − T) ≈ ΔN·(2E₁′ + E₂′)/(6R²k0²) (Snyder 1987, from memory): 6.7 km north at E′ ≈ 150 km → ≈ 2.5″
    expect(g.maxArcToChordArcsec!).toBeGreaterThan(1.5)
    expect(g.maxArcToChordArcsec!).toBeLessThan(4)
    expect(g.minCombinedFactor!).toBeLessThanOrEqual(g.meanCombinedFactor!)
    expect(g.maxCombinedFactor!).toBeGreaterThanOrEqual(g.meanCombinedFactor!)
    expect(g.heightsAssumed).toEqual([])
    expect(g.geoidSeparationM).toBe(47.3)
  })

  it('residuals and adjusted values stay in the observation\'s own units: adjusted = observed + residual', () => {
    const o = projected.observations.find((x) => x.kind === 'slope_distance')!
    expect(o.adjusted!).toBeCloseTo(o.observed + o.residual!, 12)
  })

  it('without a projection (local plane) nothing goes to the grid', () => {
    expect(local.gridReduction!.applied).toBe(false)
    expect(local.observations.every((o) => o.combinedFactor === undefined)).toBe(true)
  })

  it('mid-point rule differs from Simpson by far less than the reduction itself', () => {
    const mid = ok(adjustNetwork({ ...input, projection: { proj4: net.def, geoidSeparationM: 47.3, scaleFactorMethod: 'midpoint' } }))
    const a = projected.observations.find((x) => x.kind === 'slope_distance')!
    const b = mid.observations.find((x) => x.kind === 'slope_distance')!
    expect(Math.abs(a.combinedFactor! - b.combinedFactor!)).toBeLessThan(1e-7)
    expect(Math.abs(a.combinedFactor! - b.combinedFactor!)).toBeGreaterThan(0)
  })

  it('a station without any height is named and the mean known height stands in (directions and distances only)', () => {
    // horizontal distances S·sin z (geometric zenith) instead of slope distances and zeniths: no height network
    const plan = truth.observations.flatMap((o) => {
      if (o.kind === 'direction') return [o]
      if (o.kind !== 'slope_distance') return []
      const l = truth.lines.find((x) => x.at === o.at && x.to === o.to)!
      return [{ ...o, kind: 'horizontal_distance' as const, value: o.value * Math.sin(l.zenithGeometric) }]
    })
    const r = ok(adjustNetwork({ controls, observations: plan, approximate: net.stations.filter((s) => s.name !== 'D' && s.name !== 'A' && s.name !== 'C').map((s) => ({ station: s.name, height: s.height })), projection: { proj4: net.def } }))
    expect(r.gridReduction!.heightsAssumed).toEqual(['D'])
  })

  it('the report shows the combined factor (or says the plane is local)', () => {
    const text = formatReport(projected)
    expect(text).toContain(`combined factor mean ${projected.gridReduction!.meanCombinedFactor!.toFixed(8)}`)
    expect(formatReport(local)).toContain('Grid and ground: local plane')
  })

  it('bad projection input fails as input, naming the field', () => {
    const geo = adjustNetwork({ ...input, projection: { proj4: '+proj=longlat +datum=WGS84' } })
    expect(!geo.ok && geo.code === 'input' && /projection, field proj4: .*geographic/.test(geo.reason)).toBe(true)
    const sep = adjustNetwork({ ...input, projection: { proj4: net.def, geoidSeparationM: 900 } })
    expect(!sep.ok && /field geoidSeparationM/.test(sep.reason)).toBe(true)
  })
})
