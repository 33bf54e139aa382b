// Reliability of each observation: redundancy number r_i = 1 − ã_i·Qxx·ã_iᵀ
// (no m×m matrix), Baarda's w = v/(σ√r_i), Pope's τ = w/σ̂0, the minimal
// detectable bias MDB = σ·δ0/√r_i and its effect on the coordinates
// Δx = Qxx·ã_iᵀ·MDB/σ (the largest station shift).
// Sources: Baarda, W. (1968) A testing procedure for use in geodetic networks,
// Netherlands Geodetic Commission, Publications on Geodesy 2(5); Pope, A.J.
// (1976) The statistics of residuals and the detection of outliers, NOAA
// Technical Report NOS 65 NGS 1.

import { BLOCK as COFACTOR_BLOCK, type Cofactor } from './cofactor'
import type { LinearRow } from './lsq'
import type { AdjustSettings, ObservationResult } from './types'

/** below this redundancy number an observation counts as uncontrolled (no w, no MDB) */
export const UNCONTROLLED = 1e-6

export interface TestLimits {
  wCrit: number
  tCrit: number | null
  delta0: number
  sigma0: number | null
}

export function testObservations(
  rows: LinearRow[],
  outputs: ObservationResult[],
  rowOut: number[],
  rowScale: number[],
  qxx: Cofactor,
  stationCols: Int32Array[],
  settings: AdjustSettings,
  limits: TestLimits,
): void {
  const u = qxx.u
  const pending: { out: ObservationResult; cols: number[]; ac: number[]; k: number }[] = []
  rows.forEach((row, i) => {
    const out = outputs[rowOut[i]]
    const sc = rowScale[i]
    const ac = row.coef.map((c) => c / row.sigma)
    let qa = 0
    for (let p = 0; p < ac.length; p++) for (let q = 0; q < ac.length; q++) qa += ac[p] * qxx.get(row.cols[p], row.cols[q]) * ac[q]
    const ri = Math.min(Math.max(1 - qa, 0), 1)
    const v = -row.misclosure
    out.residual = v * sc
    out.sigma = row.sigma * Math.abs(sc)
    out.redundancy = ri
    out.weak = ri < settings.weakRedundancy
    if (out.kind === 'control') out.adjusted = out.observed + v
    else if (out.valueUnit === 'deg') out.adjusted = out.observed + (v * sc) / 3600
    else out.adjusted = out.observed + v * sc
    if (ri > UNCONTROLLED) {
      // w takes the sign of the residual as reported: rows converted with a
      // negative scale (a zenith carried by its trigonometric height) flip both.
      const w = (v / (row.sigma * Math.sqrt(ri))) * Math.sign(sc)
      out.w = w
      out.flagged = Math.abs(w) > limits.wCrit
      if (limits.sigma0 !== null && limits.sigma0 > 0 && limits.tCrit !== null) {
        out.tau = w / limits.sigma0
        out.tauFlagged = Math.abs(out.tau) > limits.tCrit
      }
      const mdb = (row.sigma * limits.delta0) / Math.sqrt(ri)
      out.mdb = mdb * Math.abs(sc)
      pending.push({ out, cols: row.cols, ac, k: mdb / row.sigma })
    }
  })
  if (!pending.length) return

  // Δx = Qxx·ãᵀ·(MDB/σ) needs whole columns of Qxx; observations are taken in the
  // order of their last unknown in R, so only a band of columns is held at a time.
  const ready = pending.map((p) => Math.max(...p.cols.map((c) => qxx.position(c))))
  const order = Array.from(pending.keys()).sort((a, b) => ready[a] - ready[b] || a - b)
  const lastIdx = new Int32Array(u).fill(-1)
  order.forEach((pi, t) => {
    for (const c of pending[pi].cols) lastIdx[c] = t
  })
  const need: number[] = []
  const seenCol = new Uint8Array(u)
  for (const pi of order) for (const c of pending[pi].cols) if (!seenCol[c]) {
    seenCol[c] = 1
    need.push(c)
  }
  let next = 0
  const cache = new Map<number, Float64Array>()
  const stride = stationCols.length ? stationCols[0].length : 1
  const coordCols = Int32Array.from(stationCols.filter((sc) => sc.some((j) => j >= 0)).flatMap((sc) => [...sc]))
  order.forEach((pi, t) => {
    const { out, cols, ac, k } = pending[pi]
    for (const c of cols) {
      if (cache.has(c)) continue
      while (need[next] !== c) next++
      const block = need.slice(next, next + COFACTOR_BLOCK)
      qxx.columns(block).forEach((q, b) => cache.set(block[b], q))
      next += block.length
    }
    const colQ = cols.map((c) => cache.get(c)!)
    let worst = 0
    for (let st = 0; st < coordCols.length; st += stride) {
      let s2 = 0
      for (let c = st; c < st + stride; c++) {
        const j = coordCols[c]
        if (j < 0) continue
        let dxj = 0
        for (let p = 0; p < ac.length; p++) dxj += colQ[p][j] * ac[p]
        s2 += (dxj * k) ** 2
      }
      if (s2 > worst) worst = s2
    }
    out.mdbEffect = Math.sqrt(worst)
    for (const c of cols) if (lastIdx[c] === t) cache.delete(c)
  })
}
