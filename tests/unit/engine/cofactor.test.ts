// Selected cofactor entries (envelope recursion on R, ./cofactor) against the full
// dense Qxx = R⁻¹R⁻ᵀ the statistics used to build, on a mid-size invented grid
// network; and the whole adjustment's precisions and reliability against an
// independent ml-matrix SVD pseudo-inverse of the whitened design.
import { describe, expect, it } from 'vitest'
import { Matrix, SVD } from 'ml-matrix'
import { Cofactor } from '../../../server/engine/cofactor'
import { cofactor, compressRows, factorize, inverseR, type QrFactorization } from '../../../server/engine/qr'
import { adjustNetwork } from '../../../server/engine/index'
import { gridNetwork, rng, type GridNet } from './helpers'

interface Design {
  rows: { cols: number[]; values: number[]; rhs: number }[]
  u: number
  col: Map<string, [number, number]>
}

/**
 * Whitened direction + distance design of a grid network at the given
 * coordinates: one orientation per station, the four fixed corners carry no
 * unknowns. Columns in station order (orientation, east, north).
 */
function design(net: GridNet, coords: Map<string, [number, number]>, free = false): Design {
  const fixedNames = new Set(free ? [] : net.controls.map((c) => c.station))
  const col = new Map<string, [number, number]>()
  const orient = new Map<string, number>()
  let u = 0
  for (const name of net.truth.keys()) {
    orient.set(name, u++)
    col.set(name, fixedNames.has(name) ? [-1, -1] : [u++, u++])
  }
  const rows = net.observations.map((o) => {
    const p = coords.get(o.at)!
    const q = coords.get(o.to)!
    const de = q[0] - p[0]
    const dn = q[1] - p[1]
    const d2 = de * de + dn * dn
    const d = Math.sqrt(d2)
    const w = 1 / o.sigma!
    const [ie, in_] = col.get(o.at)!
    const [je, jn] = col.get(o.to)!
    const entries: [number, number][] =
      o.kind === 'direction'
        ? [[orient.get(o.at)!, -w], [ie, (-dn / d2) * w], [in_, (de / d2) * w], [je, (dn / d2) * w], [jn, (-de / d2) * w]]
        : [[ie, (-de / d) * w], [in_, (-dn / d) * w], [je, (de / d) * w], [jn, (dn / d) * w]]
    const kept = entries.filter(([c]) => c >= 0).sort((a, b) => a[0] - b[0])
    return { cols: kept.map((e) => e[0]), values: kept.map((e) => e[1]), rhs: 0 }
  })
  rows.sort((a, b) => a.cols[0] - b.cols[0])
  return { rows, u, col }
}

function factor(d: Design): QrFactorization {
  const c = compressRows(d.rows, d.u)
  return factorize(c.r0, d.u, d.u, c.qtb)
}

/** |a − b| relative to √(q_ii·q_jj), the scale of a cofactor entry. */
const relErr = (a: number, b: number, qii: number, qjj: number) => Math.abs(a - b) / Math.sqrt(Math.abs(qii * qjj))

describe('selected cofactor entries vs the full dense R⁻¹R⁻ᵀ (property)', () => {
  const net = gridNetwork(9, 5)
  const d = design(net, net.truth)
  const f = factor(d)
  const u = d.u
  const dense = cofactor(f)
  const q = new Cofactor(f)
  const stationGroups = [...d.col.values()].map((c) => c.filter((x) => x >= 0))
  q.select([...d.rows.map((r) => r.cols), ...stationGroups])

  it('the network is of full rank and mid-size', () => {
    expect(f.rank).toBe(u)
    expect(u).toBeGreaterThan(200)
  })

  it('every entry among an observation’s unknowns, each station block and the diagonal agree to 1e-9 relative', () => {
    let worst = 0
    let count = 0
    for (const g of [...d.rows.map((r) => r.cols), ...stationGroups, ...Array.from({ length: u }, (_, j) => [j])]) {
      for (const i of g)
        for (const j of g) {
          worst = Math.max(worst, relErr(q.get(i, j), dense[j * u + i], dense[i * u + i], dense[j * u + j]))
          count++
        }
    }
    expect(count).toBeGreaterThan(5000)
    expect(worst).toBeLessThan(1e-9)
  })

  it('an entry that was not selected is refused rather than guessed', () => {
    // first and last unknown of a banded network are far outside the envelope
    expect(() => q.get(0, u - 1)).toThrow(/not selected/)
  })

  it('whole columns from two triangular solves agree to 1e-9 relative', () => {
    for (const j of [0, 7, Math.floor(u / 2), u - 1]) {
      const c = q.column(j)
      for (let i = 0; i < u; i++) expect(relErr(c[i], dense[j * u + i], dense[i * u + i], dense[j * u + j])).toBeLessThan(1e-9)
    }
  })

  it('the 1-norm of diag(w)·R⁻¹ equals the one from the explicit R⁻¹', () => {
    const r = rng(3)
    const w = Float64Array.from({ length: u }, () => 0.5 + r())
    const inv = inverseR(f)
    let ref = 0
    for (let j = 0; j < u; j++) {
      let s = 0
      for (let i = 0; i <= j; i++) s += Math.abs(inv[j * u + i]) * w[i]
      ref = Math.max(ref, s)
    }
    expect(Math.abs(q.inverseNorm1(w) - ref) / ref).toBeLessThan(1e-9)
  })

  it('S-transformed entries and columns equal S·Qxx·Sᵀ formed densely (S = I − K·Bᵀ, random K and B)', () => {
    const r = rng(11)
    const k = [0, 1].map(() => Float64Array.from({ length: u }, () => (r() - 0.5) / u))
    const b = [0, 1].map(() => Float64Array.from({ length: u }, () => r() - 0.5))
    const qs = new Cofactor(f, { k, b })
    qs.select(d.rows.map((row) => row.cols))
    // S·Q·Sᵀ densely: T = S·Q, then T·Sᵀ
    const S = new Matrix(u, u)
    for (let i = 0; i < u; i++) for (let j = 0; j < u; j++) S.set(i, j, (i === j ? 1 : 0) - k[0][i] * b[0][j] - k[1][i] * b[1][j])
    const Q = new Matrix(u, u)
    for (let i = 0; i < u; i++) for (let j = 0; j < u; j++) Q.set(i, j, dense[j * u + i])
    const ref = S.mmul(Q).mmul(S.transpose())
    let worst = 0
    for (const row of d.rows)
      for (const i of row.cols)
        for (const j of row.cols) worst = Math.max(worst, relErr(qs.get(i, j), ref.get(i, j), ref.get(i, i), ref.get(j, j)))
    expect(worst).toBeLessThan(1e-9)
    const c = qs.column(5)
    for (let i = 0; i < u; i++) expect(relErr(c[i], ref.get(i, 5), ref.get(i, i), ref.get(5, 5))).toBeLessThan(1e-9)
  })
})

describe('mid-size adjustment vs an independent SVD pseudo-inverse (ml-matrix)', () => {
  const net = gridNetwork(7, 21)
  const out = adjustNetwork(net)
  if (!out.ok) throw new Error(out.reason)
  const res = out.result
  const adjusted = new Map(res.stations.map((s) => [s.name, [s.east!, s.north!] as [number, number]]))
  const d = design(net, adjusted)
  // design() sorts its rows: build them one observation at a time to keep input order
  const byLine = new Map<number, (typeof d.rows)[number]>()
  net.observations.forEach((o, t) => {
    const single = design({ ...net, observations: [o] }, adjusted)
    byLine.set(t, single.rows[0])
  })
  const A = new Matrix(net.observations.length, d.u)
  byLine.forEach((row, t) => row.cols.forEach((c, p) => A.set(t, c, row.values[p])))
  const pinv = new SVD(A, { autoTranspose: true }).inverse()
  const Q = pinv.mmul(pinv.transpose())
  const s0sq = res.sigma0! ** 2

  it('the two designs have the same unknowns', () => {
    expect(d.u).toBe(res.counts.u)
  })

  it('redundancy numbers r_i = 1 − ã_i·Qxx·ã_iᵀ agree to 1e-8', () => {
    byLine.forEach((row, t) => {
      let qa = 0
      row.cols.forEach((ci, p) => row.cols.forEach((cj, s) => (qa += row.values[p] * Q.get(ci, cj) * row.values[s])))
      expect(Math.abs(res.observations[t].redundancy! - (1 - qa))).toBeLessThan(1e-8)
    })
  })

  it('station standard deviations √(σ̂0²·q_ii) agree to 1e-8 relative', () => {
    for (const [name, [ce, cn]] of d.col) {
      if (ce < 0) continue
      const st = res.stations.find((s) => s.name === name)!
      expect(Math.abs(st.sdEast! / Math.sqrt(s0sq * Q.get(ce, ce)) - 1)).toBeLessThan(1e-8)
      expect(Math.abs(st.sdNorth! / Math.sqrt(s0sq * Q.get(cn, cn)) - 1)).toBeLessThan(1e-8)
    }
  })

  it('relative ellipses between connected stations agree to 1e-8 relative', () => {
    expect(res.relative.length).toBeGreaterThan(50)
    for (const rel of res.relative) {
      const [ae, an] = d.col.get(rel.from)!
      const [be, bn] = d.col.get(rel.to)!
      const q = (i: number, j: number) => (i >= 0 && j >= 0 ? Q.get(i, j) : 0)
      const qee = q(be, be) + q(ae, ae) - 2 * q(ae, be)
      const qnn = q(bn, bn) + q(an, an) - 2 * q(an, bn)
      const qen = q(be, bn) + q(ae, an) - q(ae, bn) - q(be, an)
      const major = Math.sqrt(s0sq * ((qee + qnn) / 2 + Math.hypot((qnn - qee) / 2, qen)))
      expect(Math.abs(rel.semiMajor / major - 1)).toBeLessThan(1e-8)
    }
  })

  it('MDB effects (largest shift, from Qxx·ãᵀ·MDB/σ, at the stations the observation connects) agree to 1e-8 relative', () => {
    let checked = 0
    byLine.forEach((row, t) => {
      const o = res.observations[t]
      if (o.mdbEffect === null) return
      const k = o.mdb! / o.sigma! // MDB/σ: both carry the same output unit
      const own = [net.observations[t].at, net.observations[t].to]
      let worst = 0
      for (const name of own) {
        const [ce, cn] = d.col.get(name)!
        if (ce < 0) continue
        const dx = [ce, cn].map((j) => row.cols.reduce((s, c, p) => s + Q.get(j, c) * row.values[p], 0) * k)
        worst = Math.max(worst, Math.hypot(dx[0], dx[1]))
      }
      expect(Math.abs(o.mdbEffect / worst - 1)).toBeLessThan(1e-8)
      checked++
    })
    expect(checked).toBeGreaterThan(100)
  })
})
