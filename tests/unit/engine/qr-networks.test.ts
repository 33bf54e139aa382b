// The factorization on shapes that break naive implementations: column pivot
// swaps, a hub (one set-up seeing 40 points) and a free network whose Qxx must
// be the pseudo-inverse. References are computed here with ml-matrix's SVD and
// the test's own model functions (finite-difference Jacobians), not the engine's.
import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { Matrix, SVD } from 'ml-matrix'
import { factorize, solve } from '../../../server/engine/qr'
import { adjustNetwork, type ObservationRecord } from '../../../server/engine/index'
import { ARC, fixed, gauss, obs, ok, rng } from './helpers'

describe('column pivoting (Businger & Golub 1965: |r_kk| non-increasing with the largest-norm rule)', () => {
  it('property: columns scaled over six orders of magnitude are swapped into non-increasing |r_kk|, and the solution equals ml-matrix SVD (1e-9 relative)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e6 }), (seed) => {
        const r = rng(seed)
        const m = 12
        const n = 6
        const scale = Array.from({ length: n }, (_, j) => 10 ** (((j * 7 + seed) % 6) - 3))
        const a = new Float64Array(m * n)
        for (let j = 0; j < n; j++) for (let i = 0; i < m; i++) a[j * m + i] = (r() * 2 - 1) * scale[j]
        const b = Float64Array.from({ length: m }, () => r() * 2 - 1)
        const A = new Matrix(Array.from({ length: m }, (_, i) => Array.from({ length: n }, (_, j) => a[j * m + i])))
        const f = factorize(Float64Array.from(a), m, n, b, { pivotThreshold: 1 })
        expect([...f.perm].sort((p, q) => p - q)).toEqual([0, 1, 2, 3, 4, 5])
        expect([...f.perm]).not.toEqual([0, 1, 2, 3, 4, 5])
        for (let k = 1; k < n; k++) expect(Math.abs(f.a[k * m + k])).toBeLessThanOrEqual(Math.abs(f.a[(k - 1) * m + k - 1]) * (1 + 1e-12))
        const x = solve(f)
        const ref = new SVD(A, { autoTranspose: true }).solve(Matrix.columnVector([...b])).to1DArray()
        for (let j = 0; j < n; j++) expect(Math.abs(x[j] - ref[j])).toBeLessThanOrEqual(1e-9 * Math.max(Math.abs(ref[j]), 1e-12) + 1e-12)
      }),
      { numRuns: 30 },
    )
  })
})

/** Independent Gauss–Newton: own model functions, central-difference Jacobian, ml-matrix SVD solve. */
function referenceAdjust(unknowns: string[], known: Map<string, [number, number]>, rows: { kind: 'direction' | 'distance'; at: string; to: string; set?: string; value: number; sigma: number }[], start: Map<string, [number, number]>, sets: string[]) {
  const u = unknowns.length * 2 + sets.length
  let x = new Float64Array(u)
  unknowns.forEach((s, k) => {
    x[2 * k] = start.get(s)![0]
    x[2 * k + 1] = start.get(s)![1]
  })
  const pos = (xx: Float64Array, s: string): [number, number] => {
    const k = unknowns.indexOf(s)
    return k < 0 ? known.get(s)! : [xx[2 * k], xx[2 * k + 1]]
  }
  const f = (xx: Float64Array, row: (typeof rows)[number]) => {
    const [e1, n1] = pos(xx, row.at)
    const [e2, n2] = pos(xx, row.to)
    if (row.kind === 'distance') return Math.hypot(e2 - e1, n2 - n1)
    const w = xx[unknowns.length * 2 + sets.indexOf(row.set!)]
    let d = Math.atan2(e2 - e1, n2 - n1) - w - row.value
    d = Math.atan2(Math.sin(d), Math.cos(d))
    return d + row.value
  }
  // orientations start from the first direction of each set
  sets.forEach((s, j) => {
    const row = rows.find((q) => q.set === s)!
    const [e1, n1] = pos(x, row.at)
    const [e2, n2] = pos(x, row.to)
    x[unknowns.length * 2 + j] = Math.atan2(e2 - e1, n2 - n1) - row.value
  })
  let q: Matrix = new Matrix(u, u)
  for (let it = 0; it < 10; it++) {
    const A = new Matrix(rows.length, u)
    const l: number[] = []
    rows.forEach((row, i) => {
      l.push((row.value - f(x, row)) / row.sigma)
      for (let j = 0; j < u; j++) {
        const h = j >= unknowns.length * 2 ? 1e-7 : 1e-4
        const xp = Float64Array.from(x)
        const xm = Float64Array.from(x)
        xp[j] += h
        xm[j] -= h
        A.set(i, j, (f(xp, row) - f(xm, row)) / (2 * h) / row.sigma)
      }
    })
    const svd = new SVD(A, { autoTranspose: true })
    const pinv = svd.inverse()
    const dx = pinv.mmul(Matrix.columnVector(l)).to1DArray()
    x = x.map((v, j) => v + dx[j])
    q = pinv.mmul(pinv.transpose())
    if (Math.max(...dx.map(Math.abs)) < 1e-9) break
  }
  return { x, q, pos: (s: string) => pos(x, s) }
}

describe('hub network: one set-up sees 40 points (plus a second set-up for redundancy)', () => {
  const r = rng(40)
  const K1: [number, number] = [5000, 5000]
  const K2: [number, number] = [5000, 5600]
  const truth = new Map<string, [number, number]>([['H', [5210.4, 5290.7]]])
  for (let i = 1; i <= 40; i++) {
    const a = (i / 40) * 2 * Math.PI
    truth.set(`T${i}`, [5210.4 + (150 + 90 * r()) * Math.sin(a), 5290.7 + (150 + 90 * r()) * Math.cos(a)])
  }
  const azi = (p: [number, number], q: [number, number]) => Math.atan2(q[0] - p[0], q[1] - p[1])
  const wrap = (a: number) => ((a % (2 * Math.PI)) + 2 * Math.PI) % (2 * Math.PI)
  const rows: { kind: 'direction' | 'distance'; at: string; to: string; set?: string; value: number; sigma: number }[] = []
  const all = new Map<string, [number, number]>([...truth, ['K1', K1], ['K2', K2]])
  const noise = rng(7)
  for (const [at, orient] of [['H', 0.7], ['K1', 2.1]] as const) {
    const targets = at === 'H' ? ['K1', 'K2', ...[...truth.keys()].filter((s) => s !== 'H')] : ['K2', 'H', ...[...truth.keys()].filter((s) => s !== 'H')]
    for (const to of targets) {
      rows.push({ kind: 'direction', at, to, set: at, value: wrap(azi(all.get(at)!, all.get(to)!) - orient + 2 * ARC * gauss(noise)), sigma: 2 * ARC })
      if (at === 'H') rows.push({ kind: 'distance', at, to, value: Math.hypot(all.get(to)![0] - all.get(at)![0], all.get(to)![1] - all.get(at)![1]) + 0.002 * gauss(noise), sigma: 0.002 })
    }
  }
  const observations: ObservationRecord[] = rows.map((q, i) => obs({ line: i + 10, kind: q.kind === 'distance' ? 'horizontal_distance' : 'direction', at: q.at, to: q.to, value: q.value, sigma: q.sigma, set: q.set ?? null }))
  const res = ok(adjustNetwork({ controls: [fixed('K1', ...K1), fixed('K2', ...K2)] , observations }, { scaling: 'a-priori' }))
  const unknowns = [...truth.keys()]
  const ref = referenceAdjust(unknowns, new Map([['K1', K1], ['K2', K2]]), rows, truth, ['H', 'K1'])

  it('coordinates equal the independent SVD solution (0.01 mm)', () => {
    for (const s of unknowns) {
      const st = res.stations.find((x) => x.name === s)!
      expect(Math.abs(st.east! - ref.pos(s)[0])).toBeLessThan(1e-5)
      expect(Math.abs(st.north! - ref.pos(s)[1])).toBeLessThan(1e-5)
    }
  })
  it('σE, σN of every point equal √Qxx of the SVD pseudo-inverse (1e-6 relative)', () => {
    unknowns.forEach((s, k) => {
      const st = res.stations.find((x) => x.name === s)!
      expect(st.sdEast! / Math.sqrt(ref.q.get(2 * k, 2 * k))).toBeCloseTo(1, 6)
      expect(st.sdNorth! / Math.sqrt(ref.q.get(2 * k + 1, 2 * k + 1))).toBeCloseTo(1, 6)
    })
  })
})

describe('free network: Qxx is the pseudo-inverse (inner constraints on all stations)', () => {
  // trilateration only: the datum defect is two translations and the rotation; with
  // every station in the datum, the S-transformed Qxx is the Moore–Penrose inverse
  // of AᵀPA (Baarda 1973; Teunissen 2000, ch. on free networks — from memory)
  const pts: [string, number, number][] = [['A', 0, 0], ['B', 400, 30], ['C', 380, 420], ['D', -20, 390], ['E', 190, 210]]
  const noise = rng(3)
  const lines: [string, string][] = [['A', 'B'], ['B', 'C'], ['C', 'D'], ['D', 'A'], ['A', 'E'], ['B', 'E'], ['C', 'E'], ['D', 'E'], ['A', 'C']]
  // UTM-sized coordinates: where a near-zero pivot of the rank-deficient factor used to be divided by
  const P = new Map(pts.map(([n, e, no]) => [n, [512000 + e, 5203000 + no] as [number, number]]))
  const observations = lines.map(([a, b], i) => obs({
    line: i + 1, kind: 'horizontal_distance', at: a, to: b, sigma: 0.002,
    value: Math.hypot(P.get(b)![0] - P.get(a)![0], P.get(b)![1] - P.get(a)![1]) + 0.002 * gauss(noise),
  }))
  const res = ok(adjustNetwork({ controls: [], observations, approximate: pts.map(([n]) => ({ station: n, east: P.get(n)![0], north: P.get(n)![1] })) }, { datum: 'free', scaling: 'a-priori' }))
  it('every σE, σN and the relative precisions equal the pseudo-inverse of the whitened design at the solution (1e-6 relative)', () => {
    const names = pts.map(([n]) => n)
    const at = (s: string): [number, number] => {
      const st = res.stations.find((x) => x.name === s)!
      return [st.east!, st.north!]
    }
    const A = new Matrix(lines.length, 2 * names.length)
    lines.forEach(([a, b], i) => {
      const [ea, na] = at(a)
      const [eb, nb] = at(b)
      const d = Math.hypot(eb - ea, nb - na)
      const ia = names.indexOf(a)
      const ib = names.indexOf(b)
      A.set(i, 2 * ia, -(eb - ea) / d / 0.002)
      A.set(i, 2 * ia + 1, -(nb - na) / d / 0.002)
      A.set(i, 2 * ib, (eb - ea) / d / 0.002)
      A.set(i, 2 * ib + 1, (nb - na) / d / 0.002)
    })
    const pinv = new SVD(A, { autoTranspose: true }).inverse()
    const Q = pinv.mmul(pinv.transpose())
    names.forEach((s, k) => {
      const st = res.stations.find((x) => x.name === s)!
      expect(st.sdEast! / Math.sqrt(Q.get(2 * k, 2 * k))).toBeCloseTo(1, 6)
      expect(st.sdNorth! / Math.sqrt(Q.get(2 * k + 1, 2 * k + 1))).toBeCloseTo(1, 6)
    })
    for (const rel of res.relative) {
      const i = names.indexOf(rel.from)
      const j = names.indexOf(rel.to)
      const qee = Q.get(2 * j, 2 * j) + Q.get(2 * i, 2 * i) - 2 * Q.get(2 * i, 2 * j)
      const qnn = Q.get(2 * j + 1, 2 * j + 1) + Q.get(2 * i + 1, 2 * i + 1) - 2 * Q.get(2 * i + 1, 2 * j + 1)
      const qen = Q.get(2 * j, 2 * j + 1) + Q.get(2 * i, 2 * i + 1) - Q.get(2 * i, 2 * j + 1) - Q.get(2 * j, 2 * i + 1)
      const [ea, na] = at(rel.from)
      const [eb, nb] = at(rel.to)
      const d = Math.hypot(eb - ea, nb - na)
      const g = [(eb - ea) / d, (nb - na) / d]
      expect(rel.sdDistance / Math.sqrt(g[0] * g[0] * qee + g[1] * g[1] * qnn + 2 * g[0] * g[1] * qen)).toBeCloseTo(1, 6)
    }
  })
})
