// The sparse path (server/engine/sparse): ordering, symbolic analysis,
// multifrontal QR, selected inverse and condition estimate, each checked against
// an independent general-purpose library (ml-matrix: products, inverse, SVD),
// and whole adjustments checked against the dense path (./qr + ./cofactor),
// which is kept as the oracle.
import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { Matrix, SVD, inverse } from 'ml-matrix'
import { adjustNetwork, type AdjustmentResult, type AdjustSettings, type ObservationRecord } from '../../../server/engine/index'
import type { AdjustInput } from '../../../server/engine/types'
import { estimateInverseNorm1, normR1 } from '../../../server/engine/sparse/condition'
import { factorizeSparse, solveSparse, type SparseFactor } from '../../../server/engine/sparse/multifrontal'
import { graphFromGroups, nestedDissection } from '../../../server/engine/sparse/ordering'
import { SparseCofactor } from '../../../server/engine/sparse/selinv'
import { analyse, type SparseRows } from '../../../server/engine/sparse/symbolic'
import { ARC, fixed, gauss, gridNetwork, obs, rng } from './helpers'

/** Random sparse design: each row touches 2–3 random blocks of `bs` unknowns. */
function randomSystem(seed: number, blocks: number, bs: number, rowsPerBlock: number) {
  const r = rng(seed)
  const u = blocks * bs
  const rows: { cols: number[]; vals: number[] }[] = []
  // a chain through all blocks keeps the system connected, random rows add fill
  for (let b = 0; b < blocks; b++) {
    for (let k = 0; k < rowsPerBlock; k++) {
      const other = k === 0 && b + 1 < blocks ? b + 1 : Math.floor(r() * blocks)
      const set = [...new Set([b, other, ...(r() < 0.3 ? [Math.floor(r() * blocks)] : [])])]
      const cols: number[] = []
      const vals: number[] = []
      for (const blk of set)
        for (let q = 0; q < bs; q++) {
          cols.push(blk * bs + q)
          vals.push(r() * 2 - 1)
        }
      rows.push({ cols, vals })
    }
  }
  const m = rows.length
  const rowPtr = new Int32Array(m + 1)
  rows.forEach((row, i) => (rowPtr[i + 1] = rowPtr[i] + row.cols.length))
  const sparse: SparseRows = {
    m,
    rowPtr,
    rowCol: Int32Array.from(rows.flatMap((x) => x.cols)),
    rowVal: Float64Array.from(rows.flatMap((x) => x.vals)),
    rhs: Float64Array.from({ length: m }, () => r() * 2 - 1),
  }
  const A = new Matrix(m, u)
  rows.forEach((row, i) => row.cols.forEach((c, t) => A.set(i, c, A.get(i, c) + row.vals[t])))
  const norms = new Float64Array(u)
  for (let j = 0; j < u; j++) norms[j] = Math.hypot(...A.getColumn(j))
  const blockOf = Int32Array.from({ length: u }, (_, j) => Math.floor(j / bs))
  return { sparse, A, u, m, norms, blockOf }
}

function factor(sys: ReturnType<typeof randomSystem>): SparseFactor {
  const sym = analyse(sys.sparse, sys.u, sys.blockOf)
  return factorizeSparse(sym, sys.sparse, sys.norms)
}

/** Dense R (position order) from the supernodal storage. */
function denseR(f: SparseFactor): Matrix {
  const { ns, pivStart, npiv, fPtr, fcol, rOff } = f.sym
  const R = new Matrix(f.u, f.u)
  for (let s = 0; s < ns; s++) {
    const nc = fPtr[s + 1] - fPtr[s]
    for (let j = 0; j < npiv[s]; j++) {
      if (!f.live[pivStart[s] + j]) continue
      for (let c = j; c < nc; c++) R.set(pivStart[s] + j, fcol[fPtr[s] + c], f.rv[rOff[s] + j * nc + c])
    }
  }
  return R
}

describe('sparse QR against ml-matrix (property, random sparse systems)', () => {
  it('RᵀR = ΠᵀAᵀAΠ to 1e-12 relative (ml-matrix products); R is upper triangular', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e6 }), fc.integer({ min: 3, max: 14 }), fc.integer({ min: 1, max: 3 }), (seed, blocks, bs) => {
        const sys = randomSystem(seed, blocks, bs, 3 + bs)
        const f = factor(sys)
        expect(f.rank).toBe(sys.u)
        const R = denseR(f)
        const { colAt } = f.sym
        const P = new Matrix(sys.u, sys.u)
        for (let p = 0; p < sys.u; p++) P.set(colAt[p], p, 1)
        const AP = sys.A.mmul(P)
        const ref = AP.transpose().mmul(AP)
        const got = R.transpose().mmul(R)
        const scale = Math.max(...ref.to1DArray().map(Math.abs))
        for (let i = 0; i < sys.u; i++)
          for (let j = 0; j < sys.u; j++) {
            expect(Math.abs(got.get(i, j) - ref.get(i, j)) / scale).toBeLessThan(1e-12)
            if (i > j) expect(R.get(i, j)).toBe(0)
          }
      }),
      { numRuns: 30 },
    )
  })

  it('least-squares solution and ‖Ax − b‖² equal the ml-matrix SVD solution to 1e-9 relative', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e6 }), fc.integer({ min: 3, max: 14 }), (seed, blocks) => {
        const sys = randomSystem(seed, blocks, 2, 5)
        const f = factor(sys)
        const x = solveSparse(f)
        const b = Matrix.columnVector(Array.from(sys.sparse.rhs))
        const ref = new SVD(sys.A, { autoTranspose: true }).solve(b).to1DArray()
        const scale = Math.max(...ref.map(Math.abs))
        for (let j = 0; j < sys.u; j++) expect(Math.abs(x[j] - ref[j]) / scale).toBeLessThan(1e-9)
        const res = sys.A.mmul(Matrix.columnVector(ref)).sub(b).to1DArray()
        const rr = res.reduce((s, v) => s + v * v, 0)
        expect(Math.abs(f.residualSq - rr) / rr).toBeLessThan(1e-9)
      }),
      { numRuns: 30 },
    )
  })

  it('a dependent column is detected (rank u − 1) and named; the basic solution still fits as well as the SVD one', () => {
    const sys = randomSystem(5, 8, 2, 5)
    // make unknown 9 the sum of unknowns 2 and 12 in every row: A·e₉ = A·e₂ + A·e₁₂ after rebuilding
    const { A } = sys
    for (let i = 0; i < sys.m; i++) A.set(i, 9, A.get(i, 2) + A.get(i, 12))
    const rows: number[][] = []
    const vals: number[][] = []
    for (let i = 0; i < sys.m; i++) {
      const c: number[] = []
      const v: number[] = []
      for (let j = 0; j < sys.u; j++) if (A.get(i, j) !== 0) (c.push(j), v.push(A.get(i, j)))
      rows.push(c)
      vals.push(v)
    }
    const rowPtr = new Int32Array(sys.m + 1)
    rows.forEach((c, i) => (rowPtr[i + 1] = rowPtr[i] + c.length))
    const sparse = { ...sys.sparse, rowPtr, rowCol: Int32Array.from(rows.flat()), rowVal: Float64Array.from(vals.flat()) }
    const norms = Float64Array.from({ length: sys.u }, (_, j) => Math.hypot(...A.getColumn(j)))
    const f = factorizeSparse(analyse(sparse, sys.u, sys.blockOf), sparse, norms)
    expect(f.rank).toBe(sys.u - 1)
    expect([2, 9, 12]).toContain(f.perm[sys.u - 1])
    const x = solveSparse(f)
    expect(x[f.perm[sys.u - 1]]).toBe(0)
    const b = Matrix.columnVector(Array.from(sparse.rhs))
    const ref = new SVD(A, { autoTranspose: true }).solve(b)
    const rr = A.mmul(ref).sub(b).to1DArray().reduce((s, v) => s + v * v, 0)
    const ours = A.mmul(Matrix.columnVector(Array.from(x))).sub(b).to1DArray().reduce((s, v) => s + v * v, 0)
    expect(Math.abs(ours - rr) / rr).toBeLessThan(1e-9)
  })
})

describe('selected inverse on the pattern of R against ml-matrix inverse((AᵀA))', () => {
  it('every entry on the pattern (observation unknowns, blocks, diagonal) to 1e-9 relative; entries off it are refused', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e6 }), fc.integer({ min: 4, max: 16 }), fc.integer({ min: 1, max: 3 }), (seed, blocks, bs) => {
        const sys = randomSystem(seed, blocks, bs, 3 + bs)
        const f = factor(sys)
        const q = new SparseCofactor(f)
        q.select()
        const ref = inverse(sys.A.transpose().mmul(sys.A))
        const rel = (i: number, j: number) => Math.abs(q.get(i, j) - ref.get(i, j)) / Math.sqrt(ref.get(i, i) * ref.get(j, j))
        let count = 0
        for (let i = 0; i < sys.m; i++)
          for (let t = sys.sparse.rowPtr[i]; t < sys.sparse.rowPtr[i + 1]; t++)
            for (let t2 = sys.sparse.rowPtr[i]; t2 < sys.sparse.rowPtr[i + 1]; t2++) {
              expect(rel(sys.sparse.rowCol[t], sys.sparse.rowCol[t2])).toBeLessThan(1e-9)
              count++
            }
        for (let j = 0; j < sys.u; j++) expect(rel(j, j)).toBeLessThan(1e-9)
        expect(count).toBeGreaterThan(sys.m)
        // whole columns by two triangular solves
        const c = q.column(sys.u - 1)
        for (let i = 0; i < sys.u; i++) expect(Math.abs(c[i] - ref.get(i, sys.u - 1)) / Math.sqrt(ref.get(i, i) * ref.get(sys.u - 1, sys.u - 1))).toBeLessThan(1e-9)
      }),
      { numRuns: 30 },
    )
  })

  it('an entry outside the pattern is refused rather than guessed', () => {
    // a long chain: the two ends never share an observation nor a front
    const sys = randomSystem(1, 40, 1, 1)
    const chain = { ...sys }
    const f = factor(chain)
    const q = new SparseCofactor(f)
    q.select()
    let refused = 0
    for (let j = 1; j < chain.u; j++) {
      try {
        q.get(0, j)
      } catch (e) {
        expect(String(e)).toMatch(/outside the pattern/)
        refused++
      }
    }
    expect(refused).toBeGreaterThan(0)
  })
})

describe('Hager–Higham estimate of ‖D·R⁻¹‖₁ against the exact norm from ml-matrix inverse(R)', () => {
  it('is a lower bound within a factor 3 on every system, and on average within 25 % of the exact norm', () => {
    let ratioSum = 0
    const runs = 25
    for (let seed = 1; seed <= runs; seed++) {
      const sys = randomSystem(seed * 7919, 6 + (seed % 9), 2, 5)
      const f = factor(sys)
      const R = denseR(f)
      const { colAt } = f.sym
      const Rinv = inverse(R)
      let exact = 0
      for (let j = 0; j < sys.u; j++) {
        let s = 0
        for (let i = 0; i < sys.u; i++) s += Math.abs(Rinv.get(i, j)) * sys.norms[colAt[i]]
        exact = Math.max(exact, s)
      }
      const est = estimateInverseNorm1(f, sys.norms)
      expect(est).toBeLessThanOrEqual(exact * (1 + 1e-12))
      expect(est).toBeGreaterThan(exact / 3)
      ratioSum += est / exact
      // ‖R·D⁻¹‖₁ is read exactly
      let nr = 0
      for (let j = 0; j < sys.u; j++) {
        let s = 0
        for (let i = 0; i < sys.u; i++) s += Math.abs(R.get(i, j))
        nr = Math.max(nr, s / sys.norms[colAt[j]])
      }
      expect(Math.abs(normR1(f, sys.norms) - nr) / nr).toBeLessThan(1e-12)
    }
    expect(ratioSum / runs).toBeGreaterThan(0.75)
  })
})

describe('nested dissection ordering', () => {
  /** k×k grid, 4 neighbours: entries of R's pattern for a given order (symbolic Cholesky by elimination). */
  function fill(k: number, order: Int32Array): number {
    const n = k * k
    const pos = new Int32Array(n)
    order.forEach((v, p) => (pos[v] = p))
    const adj: Set<number>[] = Array.from({ length: n }, () => new Set())
    const link = (a: number, b: number) => {
      adj[pos[a]].add(pos[b])
      adj[pos[b]].add(pos[a])
    }
    for (let i = 0; i < k; i++)
      for (let j = 0; j < k; j++) {
        if (i + 1 < k) link(i * k + j, (i + 1) * k + j)
        if (j + 1 < k) link(i * k + j, i * k + j + 1)
      }
    // eliminate in position order: the higher neighbours of p become a clique
    let count = 0
    for (let p = 0; p < n; p++) {
      const higher = [...adj[p]].filter((q) => q > p)
      count += higher.length + 1
      for (const a of higher) for (const b of higher) if (a !== b) adj[a].add(b)
    }
    return count
  }

  it('is a permutation and gives far less fill than the row-by-row order on a 30×30 grid (George 1973: O(n log n) against O(n^1.5))', () => {
    const k = 30
    const groups: number[] = []
    const ptr = [0]
    for (let i = 0; i < k; i++)
      for (let j = 0; j < k; j++) {
        if (i + 1 < k) (groups.push(i * k + j, (i + 1) * k + j), ptr.push(groups.length))
        if (j + 1 < k) (groups.push(i * k + j, i * k + j + 1), ptr.push(groups.length))
      }
    const order = nestedDissection(graphFromGroups(k * k, Int32Array.from(ptr), Int32Array.from(groups)))
    expect([...order].sort((a, b) => a - b)).toEqual(Array.from({ length: k * k }, (_, i) => i))
    const nd = fill(k, order)
    const banded = fill(k, Int32Array.from({ length: k * k }, (_, i) => i))
    // row-by-row: every row of the factor is about k long, ≈ n·k = 27,000
    expect(banded).toBeGreaterThan(0.9 * k * k * k)
    expect(nd).toBeLessThan(0.6 * banded)
  })
})

// ---- whole adjustments: sparse against the dense oracle ------------------------------

const relDiff = (a: number | null, b: number | null, scale: number) => {
  if (a === null || b === null) return a === b ? 0 : Infinity
  return Math.abs(a - b) / Math.max(Math.abs(b), scale)
}

/** Largest relative difference over every compared statistic. */
function compare(sparse: AdjustmentResult, dense: AdjustmentResult): Record<string, number> {
  const worst: Record<string, number> = {}
  const put = (k: string, v: number) => (worst[k] = Math.max(worst[k] ?? 0, v))
  put('sigma0', relDiff(sparse.sigma0, dense.sigma0, 1e-300))
  put('vpv', relDiff(sparse.globalTest.statistic, dense.globalTest.statistic, 1e-300))
  expect(sparse.counts).toEqual(dense.counts)
  sparse.stations.forEach((s, k) => {
    const d = dense.stations[k]
    expect(s.name).toBe(d.name)
    for (const c of ['east', 'north', 'height'] as const) put('coordinates', relDiff(s[c], d[c], 1e-300))
    for (const c of ['sdEast', 'sdNorth', 'sdHeight'] as const) put('sd', relDiff(s[c], d[c], 1e-300))
    if (d.ellipse) {
      put('ellipse', relDiff(s.ellipse!.semiMajor, d.ellipse.semiMajor, 1e-300))
      put('ellipse', relDiff(s.ellipse!.semiMinor, d.ellipse.semiMinor, 1e-300))
      // azimuth in degrees: compared on the axis length scale (1e-9 of 180°)
      const da = Math.abs(s.ellipse!.azimuthDeg - d.ellipse.azimuthDeg)
      put('ellipse', Math.min(da, 180 - da) / 180)
    }
  })
  sparse.observations.forEach((o, k) => {
    const d = dense.observations[k]
    put('redundancy', relDiff(o.redundancy, d.redundancy, 1e-300))
    // residuals relative to their standard deviation, w to at least 1
    put('residual', relDiff(o.residual, d.residual, d.sigma ?? 1e-300))
    put('w', relDiff(o.w, d.w, 1))
    put('mdb', relDiff(o.mdb, d.mdb, 1e-300))
    put('mdbEffect', relDiff(o.mdbEffect, d.mdbEffect, 1e-300))
  })
  expect(sparse.relative.length).toBe(dense.relative.length)
  sparse.relative.forEach((r, k) => {
    const d = dense.relative[k]
    put('relative', relDiff(r.semiMajor, d.semiMajor, 1e-300))
    put('relative', relDiff(r.semiMinor, d.semiMinor, 1e-300))
    put('relative', relDiff(r.sdDistance, d.sdDistance, 1e-300))
  })
  return worst
}

function both(input: AdjustInput, settings: Partial<AdjustSettings> = {}) {
  const s = adjustNetwork(input, settings, { factorization: 'sparse' })
  const d = adjustNetwork(input, settings, { factorization: 'dense' })
  if (!s.ok) throw new Error(`sparse: ${s.reason}`)
  if (!d.ok) throw new Error(`dense: ${d.reason}`)
  return { s: s.result, d: d.result }
}

function expectAgree(s: AdjustmentResult, d: AdjustmentResult) {
  const worst = compare(s, d)
  // residuals and w come from coordinates of ~10⁴ m whose last bit is ~1e-12 m: over a
  // 200 m line that is ~1e-9 of a 2″ σ already, so they are held to 1e-8 of σ
  const limit = (k: string) => (k === 'residual' || k === 'w' ? 1e-8 : 1e-9)
  for (const [k, v] of Object.entries(worst)) expect({ [k]: v < limit(k) ? 'ok' : v }).toEqual({ [k]: 'ok' })
  // κ₁ of R depends on the column order (the two paths order differently), so the
  // estimate is only compared in magnitude; the dominant unknown is the same
  expect(s.health.conditionEstimate).toBeLessThan(d.health.conditionEstimate * 10)
  expect(s.health.conditionEstimate).toBeGreaterThan(d.health.conditionEstimate / 10)
  expect(s.health.dominant).toBe(d.health.dominant)
}

describe('sparse and dense adjustments agree to 1e-9 relative (dense path = oracle)', () => {
  for (const side of [3, 6, 12, 22]) {
    it(`perturbed grid, ${side * side} stations, directions and distances, four fixed corners`, () => {
      const { s, d } = both(gridNetwork(side, 100 + side))
      expect(s.stations.length).toBe(side * side)
      expectAgree(s, d)
    })
  }

  it('free network (inner constraints, S-transformation), 49 stations', () => {
    const net = gridNetwork(7, 3)
    const { s, d } = both(net, { datum: 'free' })
    expect(s.counts.r).toBe(s.counts.n - s.counts.u + 3)
    expectAgree(s, d)
  })

  // Free networks: the sparse path holds a minimal datum (d unknowns) and
  // S-transforms; the dense path adds the inner-constraint rows. Both must give
  // the inner-constraint solution and cofactors.
  it('free network, 484 stations, directions and distances (datum defect 3: two translations and the rotation)', () => {
    const net = gridNetwork(22, 31)
    const { s, d } = both(net, { datum: 'free' })
    expect(s.counts.r).toBe(s.counts.n - s.counts.u + 3)
    expectAgree(s, d)
  })

  it('free network, 100 stations, directions only (datum defect 4: the scale too)', () => {
    const net = gridNetwork(10, 32)
    // no distance, so no scale for the approximations either: they are given (the generator's truth moved by up to 1 m)
    const r = rng(34)
    const approximate = [...net.truth].map(([station, [e, n]]) => ({ station, east: e + (r() - 0.5) * 2, north: n + (r() - 0.5) * 2 }))
    const { s, d } = both({ controls: net.controls, observations: net.observations.filter((o) => o.kind === 'direction'), approximate }, { datum: 'free' })
    expect(s.counts.r).toBe(s.counts.n - s.counts.u + 4)
    expectAgree(s, d)
  })

  it('free network, 144 stations, directions, distances and two azimuths (datum defect 2: the translations)', () => {
    const net = gridNetwork(12, 33)
    // two azimuths, so that neither is the only orientation (a row with redundancy 0 has no relative precision to compare)
    const azimuths = [['P2_3', 'P9_8'], ['P10_1', 'P1_10']].map(([at, to], k) => {
      const a = net.truth.get(at)!
      const b = net.truth.get(to)!
      let v = Math.atan2(b[0] - a[0], b[1] - a[1]) + 2 * ARC * gauss(rng(40 + k))
      if (v < 0) v += 2 * Math.PI
      return obs({ line: 9000 + k, kind: 'azimuth', at, to, value: v, sigma: 2 * ARC })
    })
    const { s, d } = both({ controls: net.controls, observations: [...net.observations, ...azimuths] }, { datum: 'free' })
    expect(s.counts.r).toBe(s.counts.n - s.counts.u + 2)
    expectAgree(s, d)
  })

  it('free levelling network, 60 benchmarks (datum defect 1)', () => {
    const r = rng(18)
    const names = Array.from({ length: 60 }, (_, i) => `H${i}`)
    const h = names.map(() => 100 + r() * 20)
    const observations: ObservationRecord[] = []
    let line = 2
    for (let i = 0; i < names.length; i++)
      for (const j of [i + 1, i + 5]) {
        if (j >= names.length) continue
        const km = 0.5 + r()
        observations.push(obs({ line: line++, kind: 'height_difference', at: names[i], to: names[j], value: h[j] - h[i] + 0.001 * Math.sqrt(km) * gauss(r), lengthKm: km }))
      }
    const { s, d } = both({ controls: [{ ...fixed('H0', null, null, h[0]), line: 1 }], observations }, { datum: 'free' })
    expect(s.counts.r).toBe(s.counts.n - s.counts.u + 1)
    expectAgree(s, d)
  })

  it('weighted control, angles and azimuths, a-priori scaling', () => {
    const net = gridNetwork(8, 9)
    const r = rng(4)
    const truth = net.truth
    const extra: ObservationRecord[] = []
    const names = [...truth.keys()]
    for (let k = 0; k < 40; k++) {
      const [at, from, to] = [0, 1, 2].map(() => names[Math.floor(r() * names.length)])
      if (at === from || at === to || from === to) continue
      const a = truth.get(at)!
      const f = truth.get(from)!
      const t = truth.get(to)!
      let v = Math.atan2(t[0] - a[0], t[1] - a[1]) - Math.atan2(f[0] - a[0], f[1] - a[1]) + 3 * ARC * gauss(r)
      v = ((v % (2 * Math.PI)) + 2 * Math.PI) % (2 * Math.PI)
      extra.push(obs({ line: 5000 + k, kind: 'angle', at, from, to, value: v, sigma: 3 * ARC }))
    }
    const a = truth.get('P1_1')!
    const b = truth.get('P5_6')!
    let azv = Math.atan2(b[0] - a[0], b[1] - a[1])
    if (azv < 0) azv += 2 * Math.PI
    extra.push(obs({ line: 6000, kind: 'azimuth', at: 'P1_1', to: 'P5_6', value: azv, sigma: 2 * ARC }))
    const controls = net.controls.map((c, k) => (k < 2 ? c : { ...c, sdEast: 0.005, sdNorth: 0.005 }))
    const { s, d } = both({ controls, observations: [...net.observations, ...extra] }, { scaling: 'a-priori' })
    expect(s.observations.some((o) => o.kind === 'control')).toBe(true)
    expectAgree(s, d)
  })

  it('levelling network (1D), weighted and fixed benchmarks', () => {
    const r = rng(8)
    const names = Array.from({ length: 60 }, (_, i) => `H${i}`)
    const h = names.map(() => 100 + r() * 20)
    const observations: ObservationRecord[] = []
    let line = 2
    for (let i = 0; i < names.length; i++)
      for (const j of [i + 1, i + 7]) {
        if (j >= names.length) continue
        const km = 0.5 + r()
        observations.push(obs({ line: line++, kind: 'height_difference', at: names[i], to: names[j], value: h[j] - h[i] + 0.001 * Math.sqrt(km) * gauss(r), lengthKm: km }))
      }
    const controls = [{ ...fixed('H0', null, null, h[0]), line: 1 }, { ...fixed('H59', null, null, h[59]), sdHeight: 0.002, line: 1 }]
    const { s, d } = both({ controls, observations })
    expectAgree(s, d)
  })
})
