// The combined 3D adjustment (server/engine/network3d.ts) against references
// outside the engine:
// - a GNSS-only network, correlated vectors with simulated noise, against a
//   dense generalized least-squares solve written directly in Earth-centred
//   X, Y, Z with ml-matrix (x = (AᵀC⁻¹A)⁻¹AᵀC⁻¹l, Q_vv = C − A·Q_xx·Aᵀ), its
//   coordinates and σ taken to grid E, N and H through proj4 (geocentric →
//   geographic → UTM) and a numerical Jacobian of that chain;
// - a combined network (vectors, a total-station traverse with directions,
//   slope distances and zenith angles, a levelled line) made by the independent
//   3D truth generator ./truth3d (proj4 + GeographicLib);
// - data snooping of a planted 40 mm error, and the datum rules.
// The network is the invented mountain network of ./truth3d (UTM zone 33 N,
// 150 km east of the central meridian, so meridian convergence ≈ 1.3°).
import { describe, expect, it } from 'vitest'
import { Matrix, inverse, pseudoInverse } from 'ml-matrix'
import proj4 from 'proj4'
import { adjustNetwork, type AdjustmentResult, type ObservationRecord } from '../../../server/engine/index'
import { controlsOf, ecefOfStations, generate3d, mountainNetwork } from './truth3d'
import { gauss, ok, rng } from './helpers'

const net = mountainNetwork()
const N = 47.3
const K = 0.13
const projection = { proj4: net.def, geoidSeparationM: N }
const X = ecefOfStations(net.stations, { proj4: net.def, geoidSeparation: N })
const LINKS: [string, string][] = [
  ['A', 'B'], ['B', 'C'], ['C', 'D'], ['D', 'A'], ['A', 'E'], ['B', 'E'], ['C', 'E'], ['D', 'E'],
  ['F', 'A'], ['F', 'D'], ['F', 'E'], ['E', 'G'], ['B', 'G'], ['A', 'G'], ['B', 'D'], ['C', 'G'],
]

type V3 = [number, number, number]
/** Vectors between the links' marks, with invented σ and correlations; noise drawn from their own covariance. */
function vectorRows(seed: number | null, correlated: boolean): ObservationRecord[] {
  const r = rng(seed ?? 1)
  return LINKS.map(([a, b], i) => {
    const sigma: V3 = [0.003 + 0.0005 * (i % 3), 0.0035 + 0.0004 * (i % 4), 0.006 + 0.001 * (i % 2)]
    const correlation: V3 | null = correlated ? [0.35 - 0.05 * (i % 5), -0.25 + 0.1 * (i % 3), 0.45 - 0.08 * (i % 4)] : null
    const d = [0, 1, 2].map((c) => X.get(b)![c] - X.get(a)![c]) as V3
    if (seed !== null) {
      // d += L·z, L the Cholesky factor of the covariance (computed here with ml-matrix)
      const L = covariance(sigma, correlation).cholesky?.() ?? null
      const z = new Matrix([[gauss(r)], [gauss(r)], [gauss(r)]])
      const e = (L as unknown as Matrix).mmul(z)
      for (let c = 0; c < 3; c++) d[c] += e.get(c, 0)
    }
    return { line: 200 + i, kind: 'gnss_baseline', at: a, to: b, from: null, value: Math.hypot(...d), sigma: null, hi: null, ht: null, set: null, lengthKm: null, note: '', vector: { d, sigma, correlation } }
  })
}

function covariance(s: V3, rho: V3 | null): Matrix & { cholesky?: () => Matrix } {
  const [a, b, c] = rho ?? [0, 0, 0]
  const m = new Matrix([[s[0] ** 2, a * s[0] * s[1], b * s[0] * s[2]], [a * s[0] * s[1], s[1] ** 2, c * s[1] * s[2]], [b * s[0] * s[2], c * s[1] * s[2], s[2] ** 2]])
  // lower Cholesky factor, for drawing correlated noise only
  const L = new Matrix(3, 3)
  for (let i = 0; i < 3; i++) for (let j = 0; j <= i; j++) {
    let v = m.get(i, j)
    for (let k = 0; k < j; k++) v -= L.get(i, k) * L.get(j, k)
    L.set(i, j, i === j ? Math.sqrt(v) : v / L.get(j, j))
  }
  return Object.assign(m, { cholesky: () => L })
}

const geoDef = '+proj=longlat +ellps=GRS80 +no_defs'
const cartDef = '+proj=geocent +ellps=GRS80 +units=m +no_defs'
/** E, N, H of an ECEF point by proj4 alone. */
function gridOfEcef(p: number[]): V3 {
  const [lon, lat, h] = proj4(geoDef, cartDef).inverse([p[0], p[1], p[2]]) as number[]
  const [e, n] = proj4(net.def).forward([lon, lat])
  return [e, n, h - N]
}

/** The reference: dense GLS in ECEF with ml-matrix, station A held. */
function referenceSolve(rows: ObservationRecord[], held = 'A') {
  const unknown = net.stations.map((s) => s.name).filter((s) => s !== held)
  const col = new Map(unknown.map((s, k) => [s, 3 * k]))
  const n = rows.length * 3
  const u = unknown.length * 3
  const A = Matrix.zeros(n, u)
  const l = Matrix.zeros(n, 1)
  const C = Matrix.zeros(n, n)
  rows.forEach((o, i) => {
    const v = o.vector!
    const cov = covariance(v.sigma, v.correlation)
    for (let c = 0; c < 3; c++) {
      const rr = 3 * i + c
      let rhs = v.d[c]
      if (o.to === held) rhs -= X.get(held)![c]
      else A.set(rr, col.get(o.to)! + c, 1)
      if (o.at === held) rhs += X.get(held)![c]
      else A.set(rr, col.get(o.at)! + c, -1)
      l.set(rr, 0, rhs)
      for (let c2 = 0; c2 < 3; c2++) C.set(rr, 3 * i + c2, cov.get(c, c2))
    }
  })
  const P = inverse(C)
  const Qxx = inverse(A.transpose().mmul(P).mmul(A))
  const x = Qxx.mmul(A.transpose()).mmul(P).mmul(l)
  const v = A.mmul(x).sub(l)
  const Qvv = C.clone().sub(A.mmul(Qxx).mmul(A.transpose()))
  const vpv = v.transpose().mmul(P).mmul(v).get(0, 0)
  const r = n - u
  return { unknown, col, x, v, Qvv, Qxx, P, A, vpv, r }
}

function worstMiss(result: AdjustmentResult) {
  const worst = { e: 0, n: 0, h: 0 }
  for (const s of net.stations) {
    const r = result.stations.find((x) => x.name === s.name)
    if (!r) continue
    worst.e = Math.max(worst.e, Math.abs(r.east! - s.east))
    worst.n = Math.max(worst.n, Math.abs(r.north! - s.north))
    worst.h = Math.max(worst.h, Math.abs(r.height! - s.height))
  }
  return worst
}

describe('GNSS-only network, correlated vectors with noise, against a dense GLS solve in ECEF (ml-matrix) and proj4', () => {
  const rows = vectorRows(11, true)
  const controls = controlsOf(net.stations, ['A'])
  const result = ok(adjustNetwork({ controls, observations: rows, projection }))
  const ref = referenceSolve(rows)
  const sigma0Sq = ref.vpv / ref.r

  it('the same redundancy, σ̂0 and global test statistic', () => {
    expect(result.dof).toBe(ref.r)
    expect(result.globalTest.statistic).toBeCloseTo(ref.vpv, 6)
    expect(result.sigma0! / Math.sqrt(sigma0Sq)).toBeCloseTo(1, 7)
    expect(result.network3d?.vectors).toBe(LINKS.length)
    expect(result.network3d?.deflectionOfVerticalIgnored).toBe(true)
  })

  it('the same coordinates: ECEF solution taken to E, N, H by proj4 agrees within 0.01 mm', () => {
    for (const s of ref.unknown) {
      const k = ref.col.get(s)!
      const g = gridOfEcef([ref.x.get(k, 0), ref.x.get(k + 1, 0), ref.x.get(k + 2, 0)])
      const st = result.stations.find((x) => x.name === s)!
      expect(Math.abs(st.east! - g[0])).toBeLessThan(1e-5)
      expect(Math.abs(st.north! - g[1])).toBeLessThan(1e-5)
      expect(Math.abs(st.height! - g[2])).toBeLessThan(1e-5)
    }
  })

  it('the same σE, σN, σH and ellipses: the ECEF covariance through the Jacobian of proj4 (convergence and scale included)', () => {
    const h = 0.01
    for (const s of ref.unknown) {
      const k = ref.col.get(s)!
      const p = [ref.x.get(k, 0), ref.x.get(k + 1, 0), ref.x.get(k + 2, 0)]
      const J = Matrix.zeros(3, 3)
      for (let c = 0; c < 3; c++) {
        const up = [...p]
        const dn = [...p]
        up[c] += h
        dn[c] -= h
        const a = gridOfEcef(up)
        const b = gridOfEcef(dn)
        for (let r = 0; r < 3; r++) J.set(r, c, (a[r] - b[r]) / (2 * h))
      }
      const Q = ref.Qxx.subMatrix(k, k + 2, k, k + 2)
      const S = J.mmul(Q).mmul(J.transpose()).mul(sigma0Sq)
      const st = result.stations.find((x) => x.name === s)!
      expect(st.sdEast! / Math.sqrt(S.get(0, 0))).toBeCloseTo(1, 5)
      expect(st.sdNorth! / Math.sqrt(S.get(1, 1))).toBeCloseTo(1, 5)
      expect(st.sdHeight! / Math.sqrt(S.get(2, 2))).toBeCloseTo(1, 5)
      // the semi-major axis² is the larger eigenvalue of the 2×2 grid block
      const m = (S.get(0, 0) + S.get(1, 1)) / 2
      const big = m + Math.hypot((S.get(0, 0) - S.get(1, 1)) / 2, S.get(0, 1))
      expect(st.ellipse!.semiMajor / Math.sqrt(big)).toBeCloseTo(1, 5)
    }
  })

  it('the same relative precision between connected stations (ΔE, ΔN covariance through both stations\' proj4 Jacobians)', () => {
    const jac = (s: string) => {
      const k = ref.col.get(s)!
      const p = [ref.x.get(k, 0), ref.x.get(k + 1, 0), ref.x.get(k + 2, 0)]
      const J = Matrix.zeros(2, 3)
      for (let c = 0; c < 3; c++) {
        const up = [...p]
        const dn = [...p]
        up[c] += 0.01
        dn[c] -= 0.01
        const a = gridOfEcef(up)
        const b = gridOfEcef(dn)
        for (let r = 0; r < 2; r++) J.set(r, c, (a[r] - b[r]) / 0.02)
      }
      return { J, k }
    }
    let checked = 0
    for (const [a, b] of [['B', 'C'], ['E', 'G'], ['C', 'G']]) {
      const A = jac(a)
      const B = jac(b)
      const q = (i: number, j: number) => ref.Qxx.subMatrix(i, i + 2, j, j + 2)
      const S = B.J.mmul(q(B.k, B.k)).mmul(B.J.transpose())
        .add(A.J.mmul(q(A.k, A.k)).mmul(A.J.transpose()))
        .sub(A.J.mmul(q(A.k, B.k)).mmul(B.J.transpose()))
        .sub(B.J.mmul(q(B.k, A.k)).mmul(A.J.transpose()))
        .mul(sigma0Sq)
      const rel = result.relative.find((r) => (r.from === a && r.to === b) || (r.from === b && r.to === a))!
      const m = (S.get(0, 0) + S.get(1, 1)) / 2
      const big = m + Math.hypot((S.get(0, 0) - S.get(1, 1)) / 2, S.get(0, 1))
      expect(rel.semiMajor / Math.sqrt(big)).toBeCloseTo(1, 5)
      const sa = net.stations.find((s) => s.name === a)!
      const sb = net.stations.find((s) => s.name === b)!
      const g = [sb.east - sa.east, sb.north - sa.north]
      const d = Math.hypot(g[0], g[1])
      const varD = (g[0] * g[0] * S.get(0, 0) + g[1] * g[1] * S.get(1, 1) + 2 * g[0] * g[1] * S.get(0, 1)) / (d * d)
      expect(rel.sdDistance / Math.sqrt(varD)).toBeCloseTo(1, 4)
      checked++
    }
    expect(checked).toBe(3)
  })

  it('per component the same residual, redundancy number, w; the redundancy numbers sum to r', () => {
    const Pv = ref.P.mmul(ref.v)
    const PQP = ref.P.mmul(ref.Qvv).mmul(ref.P)
    const QvvP = ref.Qvv.mmul(ref.P)
    let sum = 0
    rows.forEach((o, i) => {
      const out = result.observations.filter((x) => x.line === o.line)
      expect(out.map((x) => x.component)).toEqual(['dx', 'dy', 'dz'])
      for (let c = 0; c < 3; c++) {
        const rr = 3 * i + c
        expect(out[c].residual!).toBeCloseTo(ref.v.get(rr, 0), 7)
        expect(out[c].redundancy!).toBeCloseTo(QvvP.get(rr, rr), 7)
        // Baarda's w of a correlated observation: (P·v)_i / √(P·Qvv·P)_ii (Teunissen 2000, Testing Theory)
        expect(out[c].w!).toBeCloseTo(Pv.get(rr, 0) / Math.sqrt(PQP.get(rr, rr)), 5)
        expect(out[c].sigma!).toBeCloseTo(o.vector!.sigma[c], 12)
        // MDB = δ0/√(P·Qvv·P)_ii (δ0 = 4.13 for α0 = 0.001, β0 = 0.80, Baarda 1968), and its
        // effect: the larger 3D shift Qxx·Aᵀ·P·e_i·MDB at the vector's two stations
        const mdb = result.critical.delta0 / Math.sqrt(PQP.get(rr, rr))
        expect(out[c].mdb! / mdb).toBeCloseTo(1, 6)
        const shift = ref.Qxx.mmul(ref.A.transpose()).mmul(ref.P.getColumnVector(rr)).mul(mdb)
        const at = [o.at, o.to].filter((s) => ref.col.has(s)).map((s) => {
          const k = ref.col.get(s)!
          return Math.hypot(shift.get(k, 0), shift.get(k + 1, 0), shift.get(k + 2, 0))
        })
        expect(out[c].mdbEffect! / Math.max(...at)).toBeCloseTo(1, 5)
        sum += out[c].redundancy!
      }
    })
    expect(sum).toBeCloseTo(ref.r, 6)
  })

  it('the whole-vector test: T = v_bᵀ(Qvv)_bb⁻¹v_b, F = (T/3)/((vᵀPv − T)/(r − 3)) against F(3, r − 3)', () => {
    rows.forEach((o, i) => {
      const vb = ref.v.subMatrix(3 * i, 3 * i + 2, 0, 0)
      const Qb = ref.Qvv.subMatrix(3 * i, 3 * i + 2, 3 * i, 3 * i + 2)
      const T = vb.transpose().mmul(inverse(Qb)).mmul(vb).get(0, 0)
      const test = result.observations.find((x) => x.line === o.line)!.vectorTest!
      expect(test.distribution).toBe('F')
      expect(test.statistic).toBeCloseTo(T / 3 / ((ref.vpv - T) / (ref.r - 3)), 5)
      // the residual in east, north, up at the vector's start (frame from proj4's latitude and longitude of the mark)
      const st = net.stations.find((s) => s.name === o.at)!
      const [lon, lat] = proj4(net.def).inverse([st.east, st.north]).map((d: number) => (d * Math.PI) / 180)
      const e = [-Math.sin(lon), Math.cos(lon), 0]
      const nn = [-Math.sin(lat) * Math.cos(lon), -Math.sin(lat) * Math.sin(lon), Math.cos(lat)]
      const up = [Math.cos(lat) * Math.cos(lon), Math.cos(lat) * Math.sin(lon), Math.sin(lat)]
      const enu = [e, nn, up].map((axis) => axis[0] * vb.get(0, 0) + axis[1] * vb.get(1, 0) + axis[2] * vb.get(2, 0))
      for (let c = 0; c < 3; c++) expect(test.residualEnu[c]).toBeCloseTo(enu[c], 7)
    })
  })

  it('the sparse and the dense factorization give the same result', () => {
    const dense = ok(adjustNetwork({ controls, observations: rows, projection }, {}, { factorization: 'dense' }))
    for (const s of result.stations) {
      const d = dense.stations.find((x) => x.name === s.name)!
      expect(Math.abs(d.east! - s.east!)).toBeLessThan(1e-7)
      expect(d.sdHeight!).toBeCloseTo(s.sdHeight!, 9)
    }
    dense.observations.forEach((o, i) => expect(o.redundancy!).toBeCloseTo(result.observations[i].redundancy!, 8))
  })
})

describe('combined network: vectors + a total-station traverse + a levelled line, noise-free, against the 3D truth (proj4 + GeographicLib)', () => {
  // traverse A → E → G → B: directions, slope distances and zenith angles at each set-up
  const traverse = net.setups
    .filter((s) => ['A', 'E', 'G', 'B'].includes(s.at))
    .map((s) => ({ ...s, targets: s.targets.filter((t) => ['A', 'E', 'G', 'B'].includes(t.to)) }))
  const terr = generate3d(net.stations, traverse, { proj4: net.def, a: net.a, f: net.f, geoidSeparation: N, refractionK: K }).observations
  const H = new Map(net.stations.map((s) => [s.name, s.height]))
  const levelled: ObservationRecord = { line: 900, kind: 'height_difference', at: 'C', to: 'D', from: null, value: H.get('D')! - H.get('C')!, sigma: null, hi: null, ht: null, set: null, lengthKm: 6.5, note: '' }
  // vectors only on part of the network, so the traverse and the levelled line carry their own stations' positions too
  const vectors = vectorRows(null, true).filter((o) => ['A-B', 'B-C', 'C-D', 'F-A', 'F-D', 'D-A'].includes(`${o.at}-${o.to}`))
  const observations = [...vectors, ...terr, levelled]
  const result = ok(adjustNetwork({ controls: controlsOf(net.stations, ['A']), observations, projection, refraction: { k: K, sigmaK: 0.05 } }))

  it('uses every kind: vectors, directions, slope distances, zeniths and the levelled line all get a redundancy number', () => {
    for (const kind of ['gnss_baseline', 'direction', 'slope_distance', 'zenith', 'height_difference']) {
      const rows = result.observations.filter((o) => o.kind === kind)
      expect(rows.length).toBeGreaterThan(0)
      for (const o of rows) expect(o.redundancy).not.toBeNull()
    }
    expect(result.refraction?.zeniths).toBe(terr.filter((o) => o.kind === 'zenith').length)
  })

  it('returns the truth within 1 mm in E and N and 2 mm in H', () => {
    const worst = worstMiss(result)
    expect(worst.e).toBeLessThan(0.001)
    expect(worst.n).toBeLessThan(0.001)
    expect(worst.h).toBeLessThan(0.002)
  })

  it('noise-free: every residual below 0.05″ or 0.1 mm, redundancy numbers sum to r', () => {
    let sum = 0
    for (const o of result.observations) {
      if (o.residual === null) continue
      expect(Math.abs(o.residual)).toBeLessThan(o.residualUnit === 'arcsec' ? 0.05 : 1e-4)
      sum += o.redundancy!
    }
    expect(sum).toBeCloseTo(result.dof, 6)
  })

  it('the dense factorization (the oracle) gives the same stations, σ and redundancy numbers', () => {
    const dense = ok(adjustNetwork({ controls: controlsOf(net.stations, ['A']), observations, projection, refraction: { k: K, sigmaK: 0.05 } }, {}, { factorization: 'dense' }))
    for (const s of result.stations) {
      const d = dense.stations.find((x) => x.name === s.name)!
      expect(Math.abs(d.north! - s.north!)).toBeLessThan(1e-7)
      expect(Math.abs(d.height! - s.height!)).toBeLessThan(1e-7)
      expect(d.sdNorth!).toBeCloseTo(s.sdNorth!, 9)
    }
    dense.observations.forEach((o, i) => expect(o.redundancy ?? 0).toBeCloseTo(result.observations[i].redundancy ?? 0, 8))
  })

  it('a wrong model fails: with one-way zeniths (reciprocal ones would cancel it), refraction left out (k = 0) moves heights by more than 2 mm', () => {
    const oneWay = terr.filter((o) => o.kind !== 'zenith' || o.at < o.to)
    const wrong = ok(adjustNetwork({ controls: controlsOf(net.stations, ['A']), observations: [...oneWay, vectors[0]], projection, refraction: { k: 0, sigmaK: 0.05 } }))
    expect(worstMiss(wrong).h).toBeGreaterThan(0.002)
  })
})

describe('data snooping of whole vectors', () => {
  const rows = vectorRows(5, true)
  const bad = rows.findIndex((o) => o.at === 'C' && o.to === 'E')
  rows[bad] = { ...rows[bad], vector: { ...rows[bad].vector!, d: [rows[bad].vector!.d[0], rows[bad].vector!.d[1], rows[bad].vector!.d[2] + 0.04] } }
  const controls = controlsOf(net.stations, ['A'])
  const result = ok(adjustNetwork({ controls, observations: rows, projection }))
  const ratio = (line: number) => {
    const t = result.observations.find((o) => o.line === line)!.vectorTest!
    return t.statistic / t.critical
  }

  it('a 40 mm error planted in one vector ΔZ is flagged, and that vector is the worst', () => {
    const comps = result.observations.filter((o) => o.line === rows[bad].line)
    expect(comps.every((o) => o.flagged && o.vectorTest!.flagged)).toBe(true)
    const worst = rows.map((o) => o.line).sort((a, b) => ratio(b) - ratio(a))[0]
    expect(worst).toBe(rows[bad].line)
    // the residual mostly up (ΔZ at 47° N is mostly the local up and north)
    const enu = comps[0].vectorTest!.residualEnu
    expect(Math.abs(enu[2])).toBeGreaterThan(Math.abs(enu[0]))
  })

  it('excluding it, the global test passes and no vector is flagged', () => {
    const excluded = rows.map((o, i) => (i === bad ? { ...o, excluded: true } : o))
    const again = ok(adjustNetwork({ controls, observations: excluded, projection }))
    expect(result.globalTest.passed).toBe(false)
    expect(again.globalTest.passed).toBe(true)
    expect(again.observations.filter((o) => o.flagged)).toEqual([])
    const ex = again.observations.filter((o) => o.line === rows[bad].line)
    expect(ex.map((o) => [o.component, o.excluded, o.residual])).toEqual([['dx', true, null], ['dy', true, null], ['dz', true, null]])
  })
})

describe('datum of the 3D network', () => {
  const rows = vectorRows(null, false)

  it('one station held in E, N and H is a valid datum (vectors carry orientation and scale)', () => {
    const r = ok(adjustNetwork({ controls: controlsOf(net.stations, ['G']), observations: rows, projection }))
    const w = worstMiss(r)
    expect(Math.max(w.e, w.n, w.h)).toBeLessThan(1e-4)
    expect(r.stations.find((s) => s.name === 'G')!.sdEast).toBe(0)
  })

  it('E, N held at one station and H at another is a valid datum too (the approximations carry positions before heights)', () => {
    const en = { ...controlsOf(net.stations, ['A'])[0], height: null }
    const h = { ...controlsOf(net.stations, ['F'])[0], line: 2, east: null, north: null }
    const r = ok(adjustNetwork({ controls: [en, h], observations: rows, projection }))
    const w = worstMiss(r)
    expect(Math.max(w.e, w.n, w.h)).toBeLessThan(1e-4)
  })

  it('no held station fails naming the missing position datum', () => {
    const out = adjustNetwork({ controls: [], observations: rows, projection })
    expect(out.ok).toBe(false)
    if (!out.ok) {
      expect(out.code).toBe('singular')
      expect(out.reason).toMatch(/no position datum/)
    }
  })

  it('a station held in E and N only fails naming the missing height datum', () => {
    const c = controlsOf(net.stations, ['A']).map((x) => ({ ...x, height: null }))
    const out = adjustNetwork({ controls: c, observations: rows, projection })
    expect(out.ok).toBe(false)
    if (!out.ok) expect(out.reason).toMatch(/no height datum/)
  })

  it('a station tied by one levelled line only is named as undetermined', () => {
    const lev: ObservationRecord = { line: 950, kind: 'height_difference', at: 'A', to: 'Z9', from: null, value: 3, sigma: 0.001, hi: null, ht: null, set: null, lengthKm: null, note: '' }
    const out = adjustNetwork({ controls: controlsOf(net.stations, ['A']), observations: [...rows, lev], projection, approximate: [{ station: 'Z9', east: net.stations[0].east + 50, north: net.stations[0].north }] })
    expect(out.ok).toBe(false)
    if (!out.ok) {
      expect(out.code).toBe('singular')
      expect(out.stations).toEqual(['Z9'])
    }
  })

  it('a local plane (no CRS) with a vector fails asking for a georeferenced CRS and a geoid separation N', () => {
    const out = adjustNetwork({ controls: controlsOf(net.stations, ['A']), observations: rows })
    expect(out.ok).toBe(false)
    if (!out.ok) {
      expect(out.code).toBe('input')
      expect(out.reason).toMatch(/^line 200, column kind: .*projected CRS and a geoid separation N/)
    }
  })
})

describe('text report of a 3D run', () => {
  it('says the deflection of the vertical is ignored and lists the vector tests worst first', async () => {
    const { formatReport } = await import('../../../server/engine/index')
    const rows = vectorRows(5, true)
    const bad = rows.findIndex((o) => o.at === 'C' && o.to === 'E')
    rows[bad] = { ...rows[bad], vector: { ...rows[bad].vector!, d: [rows[bad].vector!.d[0], rows[bad].vector!.d[1], rows[bad].vector!.d[2] + 0.04] } }
    const text = formatReport(ok(adjustNetwork({ controls: controlsOf(net.stations, ['A']), observations: rows, projection })))
    expect(text).toMatch(/deflection of the vertical is ignored/)
    const section = text.split('GNSS vector tests')[1].split('\n')
    // the first listed vector is the one with the planted error, flagged
    expect(section[1]).toMatch(new RegExp(`^\\s+${rows[bad].line} C\\s+→ E\\s.*FLAG$`))
  })
})

describe('weighted control and a-priori scaling in 3D', () => {
  const rows = vectorRows(11, true)

  it('a second station weighted in E, N, H (σ 5 mm at its true values) gives three control rows; Σ r_i = r', () => {
    const controls = [...controlsOf(net.stations, ['A']), { ...controlsOf(net.stations, ['C'])[0], line: 9, sdEast: 0.005, sdNorth: 0.005, sdHeight: 0.005 }]
    const r = ok(adjustNetwork({ controls, observations: rows, projection }))
    const ctl = r.observations.filter((o) => o.kind === 'control')
    expect(ctl.map((o) => o.component)).toEqual(['east', 'north', 'height'])
    // three more rows than the GLS reference with A held alone
    expect(r.dof).toBe(referenceSolve(rows).r + 3)
    const sum = r.observations.reduce((a, o) => a + (o.redundancy ?? 0), 0)
    expect(sum).toBeCloseTo(r.dof, 6)
    const c = r.stations.find((s) => s.name === 'C')!
    // the weighted point moves by its vectors' noise only (a few mm), and its σ is below its control σ
    const truthC = net.stations.find((s) => s.name === 'C')!
    expect(Math.hypot(c.east! - truthC.east, c.north! - truthC.north)).toBeLessThan(0.01)
    expect(c.sdEast!).toBeLessThan(0.005)
  })

  it("with scaling 'a-priori' the vector test is T against χ²(3) at α0 (16.27 for α0 = 0.001, NIST χ² table)", () => {
    const r = ok(adjustNetwork({ controls: controlsOf(net.stations, ['A']), observations: rows, projection }, { scaling: 'a-priori' }))
    const ref = referenceSolve(rows)
    const t = r.observations.find((o) => o.line === rows[0].line)!.vectorTest!
    expect(t.distribution).toBe('chi2')
    expect(t.critical).toBeCloseTo(16.266, 2)
    const vb = ref.v.subMatrix(0, 2, 0, 0)
    const Qb = ref.Qvv.subMatrix(0, 2, 0, 2)
    // 4 decimals: the engine and the linear GLS reference differ by ~4.9e-6 here
    // (measured), and the statistic moves by ~2e-7 with the rounding of the
    // converged ECEF coordinates (~1e-9 m against residuals of ~1 mm), so 5
    // decimals passed or failed by that rounding alone
    expect(t.statistic).toBeCloseTo(vb.transpose().mmul(inverse(Qb)).mmul(vb).get(0, 0), 4)
    expect(r.network3d?.vectorTest).toBe('chi2')
  })
})

describe('a run whose vectors are all excluded', () => {
  it('stays a plane and height adjustment and still reports each vector as three excluded rows dx, dy, dz', () => {
    const terr = generate3d(net.stations, net.setups, { proj4: net.def, a: net.a, f: net.f, geoidSeparation: N, refractionK: K }).observations
    const vec = { ...vectorRows(null, false)[0], excluded: true }
    const r = ok(adjustNetwork({ controls: controlsOf(net.stations, ['A', 'C']), observations: [...terr, vec], projection, refraction: { k: K, sigmaK: 0.05 } }))
    expect(r.network3d).toBeUndefined()
    expect(r.plane).toBeDefined()
    const rows = r.observations.filter((o) => o.line === vec.line)
    expect(rows.map((o) => [o.component, o.observed, o.excluded, o.residual])).toEqual(
      (['dx', 'dy', 'dz'] as const).map((c, i) => [c, vec.vector!.d[i], true, null]),
    )
  })
})

describe('azimuths, angles and horizontal distances in 3D, noise-free, against the 3D truth (local-horizon azimuths and chords)', () => {
  // one target height per set-up, so an angle's two targets share the row's ht
  const setups = [
    { at: 'E', hi: 1.62, orientation: 0.3, targets: ['A', 'B', 'C', 'D', 'G', 'F'].map((to) => ({ to, ht: 1.5 })) },
    { at: 'G', hi: 1.48, orientation: 1.1, targets: ['A', 'B', 'C', 'E'].map((to) => ({ to, ht: 1.3 })) },
  ]
  const truth = generate3d(net.stations, setups, { proj4: net.def, a: net.a, f: net.f, geoidSeparation: N, refractionK: K })
  const ARC = Math.PI / (180 * 3600)
  const base = { from: null, set: null, lengthKm: null, note: '' }
  const observations: ObservationRecord[] = []
  let line = 700
  for (const su of setups) {
    const lines = truth.lines.filter((l) => l.at === su.at)
    for (const l of lines) {
      const ht = su.targets.find((t) => t.to === l.to)!.ht
      observations.push({ ...base, line: line++, kind: 'azimuth', at: l.at, to: l.to, value: l.horizonAzimuth, sigma: 2 * ARC, hi: su.hi, ht })
      // the horizontal part of the chord in the instrument's horizon: S·sin z (geometric)
      observations.push({ ...base, line: line++, kind: 'horizontal_distance', at: l.at, to: l.to, value: l.slope * Math.sin(l.zenithGeometric), sigma: 0.002, hi: su.hi, ht })
    }
    for (let i = 1; i < lines.length; i++) {
      const v = (lines[i].horizonAzimuth - lines[i - 1].horizonAzimuth + 4 * Math.PI) % (2 * Math.PI)
      observations.push({ ...base, line: line++, kind: 'angle', at: su.at, from: lines[i - 1].to, to: lines[i].to, value: v, sigma: 3 * ARC, hi: su.hi, ht: su.targets[0].ht })
    }
  }
  // the vectors give A, B, C, D, F; E and G come from the terrestrial rows alone (no vector reaches them)
  const vectors = vectorRows(null, false).filter((o) => !['E', 'G'].includes(o.at) && !['E', 'G'].includes(o.to))
  const result = ok(adjustNetwork({ controls: controlsOf(net.stations, ['A']), observations: [...vectors, ...observations], projection }))

  it('places E and G at the truth within 1 mm in E and N and 2 mm in H', () => {
    const w = worstMiss(result)
    expect(w.e).toBeLessThan(0.001)
    expect(w.n).toBeLessThan(0.001)
    expect(w.h).toBeLessThan(0.002)
  })

  it('every azimuth, angle and horizontal distance fits: residuals below 0.05″ and 0.1 mm', () => {
    const rows = result.observations.filter((o) => ['azimuth', 'angle', 'horizontal_distance'].includes(o.kind))
    expect(rows.length).toBe(observations.length)
    for (const o of rows) expect(Math.abs(o.residual!)).toBeLessThan(o.residualUnit === 'arcsec' ? 0.05 : 1e-4)
  })

  it('a wrong model fails: grid bearings in place of the geodetic azimuths (meridian convergence ≈ 1.3° here) fail the global test', () => {
    const gridBearing = (a: string, b: string) => {
      const p = net.stations.find((s) => s.name === a)!
      const q = net.stations.find((s) => s.name === b)!
      return (Math.atan2(q.east - p.east, q.north - p.north) + 2 * Math.PI) % (2 * Math.PI)
    }
    const wrong = observations.map((o) => (o.kind === 'azimuth' ? { ...o, value: gridBearing(o.at, o.to) } : o))
    const r = ok(adjustNetwork({ controls: controlsOf(net.stations, ['A']), observations: [...vectors, ...wrong], projection }))
    expect(r.globalTest.passed).toBe(false)
  })
})

describe('free 3D network (inner constraints on the three translations) against the minimum-norm solve in ECEF (ml-matrix pseudo-inverse)', () => {
  const rows = vectorRows(11, true)
  // approximations: the truth moved by a few centimetres, different per station
  const approximate = net.stations.map((s, i) => ({ station: s.name, east: s.east + 0.03 * (i - 3), north: s.north - 0.02 * i, height: s.height + 0.05 * ((i % 3) - 1) }))
  const result = ok(adjustNetwork({ controls: [], observations: rows, projection, approximate }, { datum: 'free' }))
  const toCart = proj4(geoDef, cartDef)
  const X0 = approximate.map((a) => {
    const [lon, lat] = proj4(net.def).inverse([a.east, a.north])
    return toCart.forward([lon, lat, a.height + N]) as number[]
  })
  const names = net.stations.map((s) => s.name)
  const u = names.length * 3
  const A = Matrix.zeros(rows.length * 3, u)
  const l = Matrix.zeros(rows.length * 3, 1)
  const C = Matrix.zeros(rows.length * 3, rows.length * 3)
  rows.forEach((o, i) => {
    const a = names.indexOf(o.at)
    const b = names.indexOf(o.to)
    const cov = covariance(o.vector!.sigma, o.vector!.correlation)
    for (let c = 0; c < 3; c++) {
      A.set(3 * i + c, 3 * b + c, 1)
      A.set(3 * i + c, 3 * a + c, -1)
      // observed − computed at the approximations
      l.set(3 * i + c, 0, o.vector!.d[c] - (X0[b][c] - X0[a][c]))
      for (let c2 = 0; c2 < 3; c2++) C.set(3 * i + c, 3 * i + c2, cov.get(c, c2))
    }
  })
  // the minimum-norm correction: dx = (AᵀPA)⁺AᵀPl, its cofactor (AᵀPA)⁺ (ml-matrix pseudo-inverse)
  const P = inverse(C)
  const Nmat = A.transpose().mmul(P).mmul(A)
  const Qs = pseudoInverse(Nmat)
  const dx = Qs.mmul(A.transpose()).mmul(P).mmul(l)
  const v = A.mmul(dx).sub(l)
  const vpv = v.transpose().mmul(P).mmul(v).get(0, 0)
  const r = rows.length * 3 - (u - 3)

  it('datum defect 3: r = n − (u − 3), the same vᵀPv', () => {
    expect(result.dof).toBe(r)
    expect(result.globalTest.statistic).toBeCloseTo(vpv, 6)
  })

  it('the same coordinates within 0.05 mm (the adjusted centroid stays at the approximations\' centroid)', () => {
    names.forEach((s, k) => {
      const g = gridOfEcef([0, 1, 2].map((c) => X0[k][c] + dx.get(3 * k + c, 0)))
      const st = result.stations.find((x) => x.name === s)!
      expect(Math.abs(st.east! - g[0])).toBeLessThan(5e-5)
      expect(Math.abs(st.north! - g[1])).toBeLessThan(5e-5)
      expect(Math.abs(st.height! - g[2])).toBeLessThan(5e-5)
    })
  })

  it('the same σH of every station from the minimum-norm cofactor matrix', () => {
    const s0 = vpv / r
    names.forEach((s, k) => {
      const p = [0, 1, 2].map((c) => X0[k][c] + dx.get(3 * k + c, 0))
      const J = Matrix.zeros(1, 3)
      for (let c = 0; c < 3; c++) {
        const up = [...p]
        const dn = [...p]
        up[c] += 0.01
        dn[c] -= 0.01
        J.set(0, c, (gridOfEcef(up)[2] - gridOfEcef(dn)[2]) / 0.02)
      }
      const q = J.mmul(Qs.subMatrix(3 * k, 3 * k + 2, 3 * k, 3 * k + 2)).mmul(J.transpose()).get(0, 0) * s0
      expect(result.stations.find((x) => x.name === s)!.sdHeight! / Math.sqrt(q)).toBeCloseTo(1, 4)
    })
  })

  it('with nothing to place it from (no control, no approximations) it fails naming the stations', () => {
    const out = adjustNetwork({ controls: [], observations: rows, projection }, { datum: 'free' })
    expect(out.ok).toBe(false)
    if (!out.ok) {
      expect(out.code).toBe('unplaceable')
      expect(out.stations).toEqual(names)
    }
  })

  it('a direction in a free 3D network is refused by line and column', () => {
    const dir: ObservationRecord = { line: 77, kind: 'direction', at: 'A', to: 'B', from: null, value: 1, sigma: null, hi: null, ht: null, set: null, lengthKm: null, note: '' }
    const out = adjustNetwork({ controls: [], observations: [...rows, dir], projection, approximate }, { datum: 'free' })
    expect(out.ok).toBe(false)
    if (!out.ok) expect(out.reason).toMatch(/^line 77, column kind: a free 3D network takes GNSS baselines and slope distances only/)
  })
})

describe('what a 3D run reports about its model', () => {
  it('no grid reduction (nothing is reduced to a plane); the summary names N, the ellipsoid and the ignored deflection of the vertical', () => {
    const r = ok(adjustNetwork({ controls: controlsOf(net.stations, ['A']), observations: vectorRows(null, false), projection }))
    expect(r.gridReduction).toBeUndefined()
    expect(r.plane).toBeUndefined()
    expect(r.height).toBeUndefined()
    // GRS80: a = 6378137 m, 1/f = 298.257222101 (Moritz 1980)
    expect(r.network3d!.ellipsoid.a).toBe(6378137)
    expect(r.network3d!.ellipsoid.inverseFlattening!).toBeCloseTo(298.257222101, 6)
    expect(r.network3d!.geoidSeparationM).toBe(N)
    expect(r.network3d!.heightsAssumed).toEqual([])
  })
})
