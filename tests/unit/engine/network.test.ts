// Worked adjustments checked against independent solutions computed here with
// ml-matrix SVD (we could not recall a published textbook example to the last
// digit, so the reference is an independent implementation: its own model
// functions, finite-difference Jacobians and an SVD solve), plus invariance
// properties of the solution.
import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { Matrix, SVD } from 'ml-matrix'
import { adjustNetwork, type AdjustmentResult, type ObservationRecord } from '../../../server/engine/index'
import { chiSquareQuantile } from '../../../server/engine/stats'
import { ARC, az, fixed, gauss, gridNetwork, obs, rng } from './helpers'

function ok(outcome: ReturnType<typeof adjustNetwork>): AdjustmentResult {
  if (!outcome.ok) throw new Error(`adjustment failed: ${outcome.code} ${outcome.reason}`)
  return outcome.result
}
const st = (r: AdjustmentResult, name: string) => r.stations.find((s) => s.name === name)!

/** Independent whitened least squares by SVD: returns x, Qxx and vᵀPv. */
function svdLsq(rows: number[][], l: number[], sigma: number[]) {
  const A = new Matrix(rows.map((row, i) => row.map((v) => v / sigma[i])))
  const b = Matrix.columnVector(l.map((v, i) => v / sigma[i]))
  const svd = new SVD(A, { autoTranspose: true })
  const pinv = svd.inverse()
  const x = pinv.mmul(b).to1DArray()
  const qxx = pinv.mmul(pinv.transpose())
  const v = A.mmul(Matrix.columnVector(x)).sub(b).to1DArray()
  return { x, qxx, vpv: v.reduce((s, e) => s + e * e, 0) }
}

describe('levelling network (invented), independent SVD reference', () => {
  // benchmark BM1 = 50.000 m fixed; new points P, Q, R; lengths in km
  const lines: [string, string, number, number][] = [
    ['BM1', 'P', 1.512, 1.2],
    ['P', 'Q', 0.743, 0.8],
    ['Q', 'R', -2.105, 1.5],
    ['R', 'BM1', -0.142, 1.1],
    ['P', 'R', -1.369, 1.4],
    ['BM1', 'Q', 2.262, 1.9],
  ]
  const observations = lines.map(([at, to, dh, km], i) => obs({ line: i + 2, kind: 'height_difference', at, to, value: dh, lengthKm: km }))
  const controls = [{ ...fixed('BM1', null, null, 50), line: 1 }]
  const profile = { distanceMm: 2, distancePpm: 2, directionArcsec: 3, zenithArcsec: 5, centeringInstrumentMm: 1, centeringTargetMm: 1, levellingMmPerSqrtKm: 2 }
  const r = ok(adjustNetwork({ controls, observations, profile }))

  const unknowns = ['P', 'Q', 'R']
  const rows = lines.map(([at, to]) => unknowns.map((u) => (u === to ? 1 : 0) - (u === at ? 1 : 0)))
  const l = lines.map(([at, to, dh]) => dh + (at === 'BM1' ? 50 : 0) - (to === 'BM1' ? 50 : 0))
  const sigma = lines.map(([, , , km]) => 0.002 * Math.sqrt(km))
  const ref = svdLsq(rows, l, sigma)

  it('heights equal the SVD solution to 1e-6 m', () => {
    unknowns.forEach((u, j) => expect(st(r, u).height!).toBeCloseTo(ref.x[j], 6))
  })
  it('σ̂0² = vᵀPv / r with r = 6 − 3 and standard deviations from σ̂0²·Qxx (1e-6 relative)', () => {
    expect(r.dof).toBe(3)
    expect(r.globalTest.statistic).toBeCloseTo(ref.vpv, 6)
    const s0sq = ref.vpv / 3
    unknowns.forEach((u, j) => {
      const sd = Math.sqrt(s0sq * ref.qxx.get(j, j))
      expect(Math.abs(st(r, u).sdHeight! - sd) / sd).toBeLessThan(1e-6)
    })
  })
  it('global test bounds are the χ²(3) 2.5 % and 97.5 % quantiles (NIST §1.3.6.7.4: 0.216, 9.348, from memory)', () => {
    expect(r.globalTest.lower).toBeCloseTo(0.216, 3)
    expect(r.globalTest.upper).toBeCloseTo(9.348, 3)
  })
  it('property: Σ r_i = n − u', () => {
    const sum = r.observations.reduce((s, o) => s + (o.redundancy ?? 0), 0)
    expect(sum).toBeCloseTo(6 - 3, 10)
  })
  it('residuals are adjusted − observed', () => {
    const H = (s: string) => st(r, s).height!
    r.observations.forEach((o) => expect(o.residual!).toBeCloseTo(H(o.to) - H(o.at) - o.observed, 9))
  })
})

describe('plane triangulation–trilateration network (invented), independent Gauss–Newton with SVD', () => {
  // A, B fixed; C, D, E new; angles, distances and one azimuth-free geometry
  const truth: Record<string, [number, number]> = {
    A: [2000, 3000],
    B: [2812.4, 3075.9],
    C: [2705.3, 3651.2],
    D: [2104.8, 3702.6],
    E: [2430.1, 3360.7],
  }
  const r0 = rng(11)
  const sAng = 2 * ARC
  const sD = 0.003
  const observations: ObservationRecord[] = []
  const angleDefs: [string, string, string][] = [
    ['A', 'B', 'E'], ['A', 'E', 'D'], ['B', 'C', 'E'], ['B', 'E', 'A'], ['C', 'D', 'E'], ['C', 'E', 'B'],
    ['D', 'A', 'E'], ['D', 'E', 'C'], ['E', 'A', 'B'], ['E', 'B', 'C'], ['E', 'C', 'D'],
  ]
  const distDefs: [string, string][] = [['A', 'E'], ['B', 'E'], ['C', 'E'], ['D', 'E'], ['B', 'C'], ['C', 'D'], ['D', 'A']]
  let line = 3
  for (const [at, from, to] of angleDefs) {
    let v = az(truth[at], truth[to]) - az(truth[at], truth[from]) + sAng * gauss(r0)
    v = ((v % (2 * Math.PI)) + 2 * Math.PI) % (2 * Math.PI)
    observations.push(obs({ line: line++, kind: 'angle', at, from, to, value: v, sigma: sAng }))
  }
  for (const [at, to] of distDefs) {
    const d = Math.hypot(truth[to][0] - truth[at][0], truth[to][1] - truth[at][1]) + sD * gauss(r0)
    observations.push(obs({ line: line++, kind: 'horizontal_distance', at, to, value: d, sigma: sD }))
  }
  const controls = [
    { ...fixed('A', ...truth.A), line: 1 },
    { ...fixed('B', ...truth.B), line: 2 },
  ]
  const r = ok(adjustNetwork({ controls, observations }))

  // independent reference: own model functions, numerical Jacobian, SVD solve
  const names = ['C', 'D', 'E']
  const model = (x: number[], o: ObservationRecord): number => {
    const p = (s: string): [number, number] => (s === 'A' || s === 'B' ? truth[s] : [x[2 * names.indexOf(s)], x[2 * names.indexOf(s) + 1]])
    if (o.kind === 'angle') {
      const t = Math.atan2(p(o.to)[0] - p(o.at)[0], p(o.to)[1] - p(o.at)[1]) - Math.atan2(p(o.from!)[0] - p(o.at)[0], p(o.from!)[1] - p(o.at)[1])
      return t
    }
    return Math.hypot(p(o.to)[0] - p(o.at)[0], p(o.to)[1] - p(o.at)[1])
  }
  const wrap = (a: number) => Math.atan2(Math.sin(a), Math.cos(a))
  let x = names.flatMap((s) => [truth[s][0] + 0.5, truth[s][1] - 0.4])
  let ref = svdLsq([[0]], [0], [1])
  for (let it = 0; it < 10; it++) {
    const rows = observations.map((o) =>
      x.map((_, j) => {
        const h = 1e-4
        const xp = [...x]
        const xm = [...x]
        xp[j] += h
        xm[j] -= h
        return o.kind === 'angle' ? wrap(model(xp, o) - model(xm, o)) / (2 * h) : (model(xp, o) - model(xm, o)) / (2 * h)
      }),
    )
    const l = observations.map((o) => (o.kind === 'angle' ? wrap(o.value - model(x, o)) : o.value - model(x, o)))
    ref = svdLsq(rows, l, observations.map((o) => o.sigma!))
    x = x.map((v, j) => v + ref.x[j])
  }

  it('coordinates equal the independent solution to 1e-6 m', () => {
    names.forEach((s, k) => {
      expect(st(r, s).east!).toBeCloseTo(x[2 * k], 6)
      expect(st(r, s).north!).toBeCloseTo(x[2 * k + 1], 6)
    })
  })
  it('standard deviations and ellipse axes equal σ̂0²·Qxx of the reference (1e-6 relative)', () => {
    const vpv = observations.reduce((s, o) => {
      const v = o.kind === 'angle' ? wrap(model(x, o) - o.value) : model(x, o) - o.value
      return s + (v / o.sigma!) ** 2
    }, 0)
    const rr = observations.length - 6
    expect(r.dof).toBe(rr)
    expect(Math.abs(r.globalTest.statistic - vpv) / vpv).toBeLessThan(1e-6)
    names.forEach((s, k) => {
      const qee = ref.qxx.get(2 * k, 2 * k) * (vpv / rr)
      const qnn = ref.qxx.get(2 * k + 1, 2 * k + 1) * (vpv / rr)
      const qen = ref.qxx.get(2 * k, 2 * k + 1) * (vpv / rr)
      expect(Math.abs(st(r, s).sdEast! - Math.sqrt(qee)) / Math.sqrt(qee)).toBeLessThan(1e-6)
      expect(Math.abs(st(r, s).sdNorth! - Math.sqrt(qnn)) / Math.sqrt(qnn)).toBeLessThan(1e-6)
      const lmax = (qee + qnn) / 2 + Math.sqrt(((qee - qnn) / 2) ** 2 + qen ** 2)
      expect(Math.abs(st(r, s).ellipse!.semiMajor - Math.sqrt(lmax)) / Math.sqrt(lmax)).toBeLessThan(1e-6)
    })
  })
  it('95 % ellipse = 1σ × √(2·F(0.95; 2, r)) when σ0 is estimated', () => {
    const e = st(r, 'C')
    const ratio = e.ellipse95!.semiMajor / e.ellipse!.semiMajor
    expect(ratio).toBeCloseTo(Math.sqrt(2 * (r.dof > 0 ? jFq(r.dof) : 0)), 9)
  })
  it('a-priori scaling uses σ0 = 1 and √χ²(2, 0.95) = 2.4477 for the 95 % ellipse', () => {
    const p = ok(adjustNetwork({ controls, observations }, { scaling: 'a-priori' }))
    const e = st(p, 'C')
    expect(e.ellipse95!.semiMajor / e.ellipse!.semiMajor).toBeCloseTo(Math.sqrt(chiSquareQuantile(0.95, 2)), 9)
    const k = names.indexOf('C')
    expect(st(p, 'C').sdEast!).toBeCloseTo(Math.sqrt(ref.qxx.get(2 * k, 2 * k)), 9)
  })
})

import { fQuantile } from '../../../server/engine/stats'
function jFq(r: number) {
  return fQuantile(0.95, 2, r)
}

describe('invariance properties on invented grid networks', () => {
  const coords = (r: AdjustmentResult) => r.stations.map((s) => [s.name, s.east!, s.north!] as const).sort((a, b) => (a[0] < b[0] ? -1 : 1))

  it('property: Σ r_i = n − u', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e6 }), (seed) => {
        const net = gridNetwork(3, seed)
        const r = ok(adjustNetwork(net))
        const sum = r.observations.reduce((s, o) => s + (o.redundancy ?? 0), 0)
        expect(sum).toBeCloseTo(r.counts.n - r.counts.u, 8)
      }),
      { numRuns: 8 },
    )
  })

  it('property: the solution does not change with observation order', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e6 }), (seed) => {
        const net = gridNetwork(3, seed)
        const r1 = ok(adjustNetwork(net))
        const shuffled = [...net.observations]
        const g = rng(seed + 1)
        for (let i = shuffled.length - 1; i > 0; i--) {
          const j = Math.floor(g() * (i + 1))
          ;[shuffled[i], shuffled[j]] = [shuffled[j], shuffled[i]]
        }
        const r2 = ok(adjustNetwork({ ...net, observations: shuffled }))
        const c1 = coords(r1)
        const c2 = coords(r2)
        c1.forEach((c, i) => {
          expect(c2[i][1]).toBeCloseTo(c[1], 7)
          expect(c2[i][2]).toBeCloseTo(c[2], 7)
        })
        expect(r2.sigma0!).toBeCloseTo(r1.sigma0!, 9)
      }),
      { numRuns: 5 },
    )
  })

  it('property: scaling all σ by k leaves coordinates and a-posteriori precisions unchanged, σ̂0 scales by 1/k', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e6 }), fc.double({ min: 0.2, max: 5, noNaN: true }), (seed, k) => {
        const net = gridNetwork(3, seed)
        const r1 = ok(adjustNetwork(net))
        const r2 = ok(adjustNetwork({ ...net, observations: net.observations.map((o) => ({ ...o, sigma: o.sigma! * k })) }))
        const s1 = r1.stations
        r2.stations.forEach((s, i) => {
          expect(s.east!).toBeCloseTo(s1[i].east!, 7)
          expect(s.north!).toBeCloseTo(s1[i].north!, 7)
          expect(s.sdEast!).toBeCloseTo(s1[i].sdEast!, 9)
        })
        expect(r2.sigma0! * k).toBeCloseTo(r1.sigma0!, 9)
      }),
      { numRuns: 5 },
    )
  })

  it('property: shifting control by a constant shifts coordinates and keeps precisions', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e6 }), fc.double({ min: -1e5, max: 1e5, noNaN: true }), fc.double({ min: -1e5, max: 1e5, noNaN: true }), (seed, de, dn) => {
        const net = gridNetwork(3, seed)
        const r1 = ok(adjustNetwork(net))
        const shifted = net.controls.map((c) => ({ ...c, east: c.east! + de, north: c.north! + dn }))
        const r2 = ok(adjustNetwork({ ...net, controls: shifted }))
        r2.stations.forEach((s, i) => {
          expect(s.east! - de).toBeCloseTo(r1.stations[i].east!, 6)
          expect(s.north! - dn).toBeCloseTo(r1.stations[i].north!, 6)
          expect(s.sdNorth!).toBeCloseTo(r1.stations[i].sdNorth!, 9)
          if (s.ellipse) expect(s.ellipse.azimuthDeg).toBeCloseTo(r1.stations[i].ellipse!.azimuthDeg, 5)
        })
      }),
      { numRuns: 5 },
    )
  })

  it('free network: r = n − u + 3 (two translations, rotation); same vᵀPv and distances as a minimally constrained run', () => {
    const net = gridNetwork(3, 5)
    const free = ok(adjustNetwork(net, { datum: 'free' }))
    expect(free.counts.r).toBe(free.counts.n - free.counts.u + 3)
    expect(free.stations.every((s) => !s.fixed)).toBe(true)
    expect(free.observations.reduce((s, o) => s + (o.redundancy ?? 0), 0)).toBeCloseTo(free.counts.r, 8)
    // minimal constraints: one fixed point plus one azimuth (its redundancy is 0, so it cannot change the fit)
    const a = net.truth.get('P0_0')!
    const b = net.truth.get('P1_0')!
    const minimal = ok(
      adjustNetwork({
        controls: [fixed('P0_0', a[0], a[1])],
        observations: [...net.observations, obs({ line: 999, kind: 'azimuth', at: 'P0_0', to: 'P1_0', value: az(a, b), sigma: ARC })],
      }),
    )
    expect(minimal.globalTest.statistic).toBeCloseTo(free.globalTest.statistic, 8)
    expect(minimal.observations.find((o) => o.line === 999)!.redundancy!).toBeLessThan(1e-9)
    const d = (r: AdjustmentResult, p: string, q: string) => Math.hypot(st(r, p).east! - st(r, q).east!, st(r, p).north! - st(r, q).north!)
    for (const [p, q] of [['P0_0', 'P2_2'], ['P1_2', 'P2_0'], ['P0_1', 'P2_1']]) expect(d(free, p, q)).toBeCloseTo(d(minimal, p, q), 6)
    // its Qxx against the pseudo-inverse: qr-networks.test.ts
  })
})
