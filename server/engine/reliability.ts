// Reliability of each observation: redundancy number r_i = 1 − ã_i·Qxx·ã_iᵀ
// (no m×m matrix), Baarda's w = v/(σ√r_i), Pope's τ = w/σ̂0, the minimal
// detectable bias MDB = σ·δ0/√r_i and its effect on the coordinates
// Δx = Qxx·ã_iᵀ·MDB/σ (the largest shift at the stations the observation connects).
// Sources: Baarda, W. (1968) A testing procedure for use in geodetic networks,
// Netherlands Geodetic Commission, Publications on Geodesy 2(5); Pope, A.J.
// (1976) The statistics of residuals and the detection of outliers, NOAA
// Technical Report NOS 65 NGS 1.

import { localMdbEffectOfBlock, type CofactorMatrix } from './cofactor'
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
  qxx: CofactorMatrix,
  stationCols: Int32Array[],
  settings: AdjustSettings,
  limits: TestLimits,
): void {
  const stationOfCol = new Int32Array(qxx.u).fill(-1)
  stationCols.forEach((sc, st) => sc.forEach((j) => j >= 0 && (stationOfCol[j] = st)))
  // each row's block of Qxx is read once (k(k+1)/2 entries) and serves both
  // ã·Qxx·ãᵀ and the MDB effect: no per-row arrays beyond two scratch buffers
  let ac = new Float64Array(8)
  let block = new Float64Array(64)
  for (let i = 0; i < rows.length; i++) {
    const row = rows[i]
    const out = outputs[rowOut[i]]
    const sc = rowScale[i]
    const cols = row.cols
    const n = cols.length
    if (ac.length < n) {
      ac = new Float64Array(2 * n)
      block = new Float64Array(4 * n * n)
    }
    for (let p = 0; p < n; p++) ac[p] = row.coef[p] / row.sigma
    let qa = 0
    for (let p = 0; p < n; p++) {
      for (let q = p; q < n; q++) {
        const v = qxx.get(cols[p], cols[q])
        block[p * n + q] = v
        block[q * n + p] = v
      }
    }
    for (let p = 0; p < n; p++) for (let q = 0; q < n; q++) qa += ac[p] * block[p * n + q] * ac[q]
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
      // External reliability at bounded cost: Δx = Qxx·ãᵀ·(MDB/σ) at the stations the
      // observation itself connects, from the selected entries of Qxx (see ./cofactor).
      out.mdbEffect = localMdbEffectOfBlock(block, cols, ac, mdb / row.sigma, stationOfCol)
    }
  }
}
