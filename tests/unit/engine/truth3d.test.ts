// The adjustment against an independent 3D truth (./truth3d: ECEF chords,
// local-horizon azimuths and refracted zenith angles from proj4 and
// GeographicLib — none of the engine's reductions). Noise-free data must come
// back to the truth: 1 mm in E and N, 2 mm in H (acceptance of the engine's
// geodetic models, lines to 7 km and height differences to 550 m).
import { describe, expect, it } from 'vitest'
import { adjustNetwork, type AdjustmentResult } from '../../../server/engine/index'
import { controlsOf, generate3d, mountainNetwork } from './truth3d'
import { ok } from './helpers'

describe('3D truth: mountain network in UTM zone 33 N, 150 km from the central meridian (method: ECEF chords, local-horizon azimuths, refracted zeniths from proj4 + GeographicLib)', () => {
  const net = mountainNetwork()
  const N = 47.3
  const K = 0.13
  const truth = generate3d(net.stations, net.setups, { proj4: net.def, a: net.a, f: net.f, geoidSeparation: N, refractionK: K })
  const controls = controlsOf(net.stations, ['A', 'C'])
  const result = ok(adjustNetwork(
    { controls, observations: truth.observations, projection: { proj4: net.def, geoidSeparationM: N }, refraction: { k: K, sigmaK: 0.05 } },
  ))
  const worst = { e: 0, n: 0, h: 0 }
  for (const s of net.stations) {
    const r = result.stations.find((x) => x.name === s.name)!
    worst.e = Math.max(worst.e, Math.abs(r.east! - s.east))
    worst.n = Math.max(worst.n, Math.abs(r.north! - s.north))
    worst.h = Math.max(worst.h, Math.abs(r.height! - s.height))
  }

  it('the network spans what the acceptance asks: lines 1.5–6.9 km, height differences to 550 m, 150 km east of the central meridian', () => {
    const lengths = truth.lines.map((l) => l.geodesic)
    expect(Math.min(...lengths)).toBeLessThan(1600)
    expect(Math.max(...lengths)).toBeGreaterThan(6500)
    expect(Math.max(...lengths)).toBeLessThan(7000)
    const byName = new Map(net.stations.map((s) => [s.name, s.height]))
    expect(Math.max(...truth.lines.map((l) => Math.abs(byName.get(l.to)! - byName.get(l.at)!)))).toBeGreaterThan(500)
    expect(Math.min(...net.stations.map((s) => s.east)) - 500000).toBeGreaterThan(145000)
  })

  it('returns the truth within 1 mm in E and N and 2 mm in H', () => {
    console.log(`3D truth: worst |ΔE| ${(worst.e * 1e6).toFixed(1)} µm, |ΔN| ${(worst.n * 1e6).toFixed(1)} µm, |ΔH| ${(worst.h * 1e6).toFixed(1)} µm; σ̂0 plane ${result.plane?.sigma0?.toFixed(4)}, height ${result.height?.sigma0?.toFixed(4)}`)
    expect(worst.e).toBeLessThan(0.001)
    expect(worst.n).toBeLessThan(0.001)
    expect(worst.h).toBeLessThan(0.002)
  })

  it('noise-free data fit: σ̂0 of both networks far below 1 and every residual below 0.05″ or 0.1 mm', () => {
    expect(result.plane!.sigma0!).toBeLessThan(0.05)
    expect(result.height!.sigma0!).toBeLessThan(0.05)
    for (const o of result.observations) {
      if (o.residual === null) continue
      expect(Math.abs(o.residual)).toBeLessThan(o.residualUnit === 'arcsec' ? 0.05 : 1e-4)
    }
  })

  it('a wrong model fails: without the projection (a local plane) the same data miss by decimetres', () => {
    const local = ok(adjustNetwork({ controls, observations: truth.observations }))
    const miss = Math.max(...net.stations.map((s) => {
      const r = local.stations.find((x) => x.name === s.name)!
      return Math.hypot(r.east! - s.east, r.north! - s.north)
    }))
    expect(miss).toBeGreaterThan(0.05)
  })

  it('a wrong refraction coefficient shows: reciprocal zeniths no longer agree (the height network fails its global test), and one-way lines move the heights by more than 2 mm', () => {
    const input = { controls, projection: { proj4: net.def, geoidSeparationM: N }, refraction: { k: 0, sigmaK: 0 } }
    const r0 = ok(adjustNetwork({ ...input, observations: truth.observations }))
    expect(r0.height!.globalTest.passed).toBe(false)
    // one way only: every line observed from the station earlier in the alphabet
    const oneWay = truth.observations.filter((o) => o.at < o.to)
    const right = ok(adjustNetwork({ ...input, refraction: { k: K, sigmaK: 0 }, observations: oneWay }))
    const wrong = ok(adjustNetwork({ ...input, observations: oneWay }))
    const miss = (r: AdjustmentResult) => Math.max(...net.stations.map((s) => Math.abs(r.stations.find((x) => x.name === s.name)!.height! - s.height)))
    expect(miss(right)).toBeLessThan(0.002)
    expect(miss(wrong)).toBeGreaterThan(0.01)
  })

  it('every reduced distance is the GeographicLib geodesic between the marks times the line scale (0.05 mm)', () => {
    // grid length of a reduced row = adjusted grid distance; its ellipsoidal arc = grid / k
    for (const o of result.observations.filter((x) => x.kind === 'slope_distance')) {
      const l = truth.lines.find((x) => x.at === o.at && x.to === o.to)!
      const a = net.stations.find((s) => s.name === o.at)!
      const b = net.stations.find((s) => s.name === o.to)!
      const grid = Math.hypot(b.east - a.east, b.north - a.north)
      expect(Math.abs(grid / o.scaleFactor! - l.geodesic)).toBeLessThan(5e-5)
    }
  })

  it('one control point and an observed azimuth (ellipsoidal, in the instrument\'s horizon): the grid convergence (≈ 1.5° here) carries it to the grid, truth within 1 mm', () => {
    const l = truth.lines.find((x) => x.at === 'A' && x.to === 'D')!
    const azimuthRow = { ...truth.observations.find((o) => o.kind === 'direction' && o.at === 'A' && o.to === 'D')!, line: 9999, kind: 'azimuth' as const, value: l.horizonAzimuth, set: null }
    const one = ok(adjustNetwork({
      controls: controlsOf(net.stations, ['A']),
      observations: [...truth.observations, azimuthRow],
      projection: { proj4: net.def, geoidSeparationM: N },
      refraction: { k: K, sigmaK: 0.05 },
    }))
    const miss = Math.max(...net.stations.map((s) => {
      const r = one.stations.find((x) => x.name === s.name)!
      return Math.hypot(r.east! - s.east, r.north! - s.north)
    }))
    expect(miss).toBeLessThan(0.001)
    // the same azimuth taken as a grid bearing (no convergence) misses by metres
    const asGrid = ok(adjustNetwork({ controls: controlsOf(net.stations, ['A']), observations: [...truth.observations, azimuthRow] }))
    const far = Math.max(...net.stations.map((s) => Math.hypot(asGrid.stations.find((x) => x.name === s.name)!.east! - s.east, asGrid.stations.find((x) => x.name === s.name)!.north! - s.north)))
    expect(far).toBeGreaterThan(1)
  })
})
