// Selected entries of the cofactor matrix Qxx = R⁻¹R⁻ᵀ of the whitened problem,
// straight from the triangular factor R of the pivoted QR (./qr). Neither the
// normal equations nor an explicit inverse are formed.
//
// The statistics need only a few parts of Qxx: the entries among the unknowns of
// each observation (redundancy numbers q_vv,i = q_ll,i − ã_i Qxx ã_iᵀ), the 2×2
// blocks of each station (absolute ellipses), the blocks between stations joined
// by an observation (relative ellipses) and the diagonal (condition diagnosis).
// These lie inside the envelope (skyline) of R — column j from its first non-zero
// row to the diagonal — widened where a caller asks for more. On such an
// envelope the recursion
//   z_kj = (δ_kj / r_kk − Σ_{l>k, r_kl≠0} r_kl·z_lj) / r_kk   (k ≤ j),
// which is R·Z = R⁻ᵀ read row by row, only ever reaches entries inside the
// envelope, so its cost is Σ over envelope entries of the row lengths of R
// (≈ u·b² for bandwidth b) instead of u³ for the full matrix.
// Source: Takahashi, K., Fagan, J. & Chin, M.-S. (1973) Formation of a sparse
// bus impedance matrix and its application to short circuit study, Proc. 8th
// PICA Conference, Minneapolis, 63–69 (the recursion on the factor's pattern);
// the envelope closure argument is Erisman, A.M. & Tinney, W.F. (1975) On
// computing certain elements of the inverse of a sparse matrix, Comm. ACM 18(3),
// 177–179, doi:10.1145/360680.360704 (both from memory).
//
// Whole columns of Qxx (for the effect of a minimal detectable bias on every
// station) come from two triangular solves each, Rᵀ·y = e_j and R·z = y, which
// skip the zero envelope of R.
//
// A free network's S-transformation Qxx_S = S·Qxx·Sᵀ, S = I − K·Bᵀ (Baarda 1973,
// see ./lsq), is applied entry by entry with QB = Qxx·B from 2·d solves.
//
// Only rank, perm and the R part of QrFactorization are read, so a sparse
// factorization can take the dense one's place behind the same methods.

import type { QrFactorization } from './qr'

/** S = I − K·Bᵀ (columns k_p, b_p in the caller's order). */
export interface DatumTransform {
  k: Float64Array[]
  b: Float64Array[]
}

/** right-hand sides per triangular solve: R is read once for all of them */
export const BLOCK = 32

/**
 * Qxx of the basic solution behind one interface, dense or sparse, with a free
 * network's S-transformation applied entry by entry on top. Subclasses supply
 * the basic entries, columns and products.
 */
export abstract class CofactorMatrix {
  readonly u: number
  readonly rank: number
  private readonly datum: DatumTransform | null
  /** Qxx·b_p (caller order) and C = BᵀQxxB, for the S-transformation */
  private readonly qb: Float64Array[] = []
  private readonly c: number[][] = []

  constructor(u: number, rank: number, datum: DatumTransform | null) {
    this.u = u
    this.rank = rank
    this.datum = datum && datum.k.length ? datum : null
  }

  /** Computes the selected entries (every pair within each group, and the diagonal). */
  abstract select(groups: Iterable<ArrayLike<number>>): void
  /** Qxx_ij of the basic solution (zero rows and columns for dependent unknowns). */
  protected abstract basicGet(i: number, j: number): number
  /** Several whole columns of the basic Qxx, caller's order. */
  protected abstract basicColumns(js: ArrayLike<number>): Float64Array[]

  /** Call at the end of a subclass constructor, once its factor is readable. */
  protected initDatum(): void {
    if (!this.datum) return
    const d = this.datum.k.length
    const qb = this.basicColumnsOf(this.datum.b)
    for (let p = 0; p < d; p++) this.qb.push(qb[p])
    for (let p = 0; p < d; p++) {
      const row: number[] = []
      for (let r = 0; r < d; r++) {
        let s = 0
        const bp = this.datum.b[p]
        const qr = this.qb[r]
        for (let i = 0; i < this.u; i++) s += bp[i] * qr[i]
        row.push(s)
      }
      this.c.push(row)
    }
  }

  /** Qxx·v for several vectors v (caller's order), basic solution. */
  protected abstract basicColumnsOf(vs: Float64Array[]): Float64Array[]

  /** Qxx_ij (S-transformed for a free network) for a selected pair of caller's columns. */
  get(i: number, j: number): number {
    const q = this.basicGet(i, j)
    return this.datum ? q + this.sCorrection(i, j) : q
  }

  /** Column j of Qxx (S-transformed), caller order, by two triangular solves. */
  column(j: number): Float64Array {
    return this.columns([j])[0]
  }

  /** Several columns of Qxx at once: the solves then read R once for all of them. */
  columns(js: ArrayLike<number>): Float64Array[] {
    const out = this.basicColumns(js)
    if (this.datum) for (let b = 0; b < js.length; b++) for (let i = 0; i < this.u; i++) out[b][i] += this.sCorrection(i, js[b])
    return out
  }

  /** (S·Q·Sᵀ − Q)_ij = Σ_p (−k_p,i·qb_p,j − qb_p,i·k_p,j + Σ_r k_p,i·C_pr·k_r,j) */
  private sCorrection(i: number, j: number): number {
    const { k } = this.datum!
    const d = k.length
    let s = 0
    for (let p = 0; p < d; p++) {
      s -= k[p][i] * this.qb[p][j] + this.qb[p][i] * k[p][j]
      for (let r = 0; r < d; r++) s += k[p][i] * this.c[p][r] * k[r][j]
    }
    return s
  }
}

/**
 * External reliability at bounded cost: the largest shift that an undetected
 * error of MDB size in one observation causes at the stations that observation
 * connects, Δx = Qxx·ãᵀ·(MDB/σ) on their coordinates (Baarda 1968). Every entry
 * needed lies among the observation's own unknowns, which the selected inverse
 * holds, so the cost is O(k²) per observation instead of a solve with R.
 * `stationOf[j]` = station of coordinate unknown j, −1 for other unknowns.
 */
export function localMdbEffect(
  qxx: CofactorMatrix,
  cols: ArrayLike<number>,
  ac: ArrayLike<number>,
  k: number,
  stationOf: Int32Array,
): number {
  const n = cols.length
  const block = new Float64Array(n * n)
  for (let p = 0; p < n; p++) for (let q = 0; q < n; q++) block[p * n + q] = qxx.get(cols[p], cols[q])
  return localMdbEffectOfBlock(block, cols, ac, k, stationOf)
}

/**
 * localMdbEffect with the row's block of Qxx already read (block[p·n + q] =
 * Qxx(cols[p], cols[q]), n = cols.length): the same sums, no further look-ups.
 */
export function localMdbEffectOfBlock(
  block: Float64Array,
  cols: ArrayLike<number>,
  ac: ArrayLike<number>,
  k: number,
  stationOf: Int32Array,
): number {
  let worst = 0
  const n = cols.length
  for (let a = 0; a < n; a++) {
    const st = stationOf[cols[a]]
    if (st < 0) continue
    // the first coordinate column of this station in the row carries the station
    let firstOfStation = true
    for (let b = 0; b < a; b++) if (stationOf[cols[b]] === st) firstOfStation = false
    if (!firstOfStation) continue
    let s2 = 0
    for (let c = 0; c < n; c++) {
      if (stationOf[cols[c]] !== st) continue
      let dx = 0
      for (let p = 0; p < n; p++) dx += block[c * n + p] * ac[p]
      s2 += (dx * k) ** 2
    }
    if (s2 > worst) worst = s2
  }
  return Math.sqrt(worst)
}

export class Cofactor extends CofactorMatrix {
  private readonly f: QrFactorization
  /** caller's column → pivot position */
  private readonly pos: Int32Array
  /** first non-zero row of each column of R₁₁ (pivot order) */
  private readonly top: Int32Array
  /**
   * R₁₁ packed by columns, rows top[k]..k of column k from rOff[k] − top[k]
   * (so R_ik = rv[rOff[k] + i]): the envelope fits in cache where the dense
   * square array does not, which is what makes the solves fast
   */
  private readonly rv: Float64Array
  private readonly rOff: Int32Array
  /** envelope storage of Z = R⁻¹R⁻ᵀ: rows first[c]..c of column c, z_ic at z[start[c] + i] */
  private first: Int32Array | null = null
  private start: Int32Array | null = null
  private z: Float64Array | null = null

  constructor(f: QrFactorization, datum: DatumTransform | null = null) {
    super(f.n, f.rank, datum)
    this.f = f
    this.pos = new Int32Array(f.n)
    for (let k = 0; k < f.n; k++) this.pos[f.perm[k]] = k
    const { a, m } = f
    this.top = new Int32Array(f.rank)
    let size = 0
    for (let k = 0; k < f.rank; k++) {
      let i = 0
      while (i < k && a[k * m + i] === 0) i++
      this.top[k] = i
      size += k - i + 1
    }
    this.rv = new Float64Array(size)
    this.rOff = new Int32Array(f.rank)
    let o = 0
    for (let k = 0; k < f.rank; k++) {
      const t = this.top[k]
      this.rOff[k] = o - t
      this.rv.set(a.subarray(k * m + t, k * m + k + 1), o)
      o += k - t + 1
    }
    this.initDatum()
  }

  /** Pivot position of a caller's column (for processing columns in R's order). */
  position(j: number): number {
    return this.pos[j]
  }

  /**
   * Computes Z inside R's envelope widened to cover every pair within each
   * group (caller's columns), and the whole diagonal. Call once before get().
   */
  select(groups: Iterable<ArrayLike<number>>): void {
    const rank = this.rank
    const { rv, rOff, top, pos } = this
    const first = Int32Array.from(top)
    for (const g of groups) {
      for (let s = 0; s < g.length; s++) {
        const ps = pos[g[s]]
        if (ps >= rank) continue
        for (let t = 0; t < g.length; t++) {
          const pt = pos[g[t]]
          if (pt >= rank || pt <= ps) continue
          if (ps < first[pt]) first[pt] = ps
        }
      }
    }
    const start = new Int32Array(rank + 1)
    for (let j = 0; j < rank; j++) start[j + 1] = start[j] + (j - first[j] + 1)
    const z = new Float64Array(start[rank])
    // rows of the strict upper part of R: (column, value) lists
    const rowStart = new Int32Array(rank + 1)
    for (let l = 0; l < rank; l++) for (let k = top[l]; k < l; k++) if (rv[rOff[l] + k] !== 0) rowStart[k + 1]++
    for (let k = 0; k < rank; k++) rowStart[k + 1] += rowStart[k]
    const fill = rowStart.slice(0, rank)
    const rowCol = new Int32Array(rowStart[rank])
    const rowVal = new Float64Array(rowStart[rank])
    for (let l = 0; l < rank; l++) {
      for (let k = top[l]; k < l; k++) {
        const v = rv[rOff[l] + k]
        if (v !== 0) {
          rowCol[fill[k]] = l
          rowVal[fill[k]++] = v
        }
      }
    }
    // z at column c, row i (i ≤ c) is z[start[c] − first[c] + i]
    const zOff = new Int32Array(rank)
    for (let c = 0; c < rank; c++) zOff[c] = start[c] - first[c]
    // columns from the last, rows from the diagonal up: every z_lj the sum needs
    // (l > k) is then known, and lies in the envelope because r_kl ≠ 0 ⇒ first[l] ≤ k
    for (let j = rank - 1; j >= 0; j--) {
      const sj = zOff[j]
      for (let k = j; k >= first[j]; k--) {
        let s = 0
        for (let t = rowStart[k]; t < rowStart[k + 1]; t++) {
          const l = rowCol[t]
          s += rowVal[t] * (l <= j ? z[sj + l] : z[zOff[l] + j])
        }
        const rkk = rv[rOff[k] + k]
        z[sj + k] = ((k === j ? 1 / rkk : 0) - s) / rkk
      }
    }
    this.first = first
    this.start = zOff
    this.z = z
  }

  protected basicGet(i: number, j: number): number {
    const z = this.z
    if (!z) throw new Error('Cofactor.select() must run before get()')
    let pi = this.pos[i]
    let pj = this.pos[j]
    if (pi > pj) {
      const t = pi
      pi = pj
      pj = t
    }
    if (pj >= this.rank) return 0
    if (pi < this.first![pj]) throw new Error(`cofactor entry (${i}, ${j}) was not selected`)
    return z[this.start![pj] + pi]
  }

  protected basicColumnsOf(vs: Float64Array[]): Float64Array[] {
    return vs.map((v) => this.apply(v))
  }

  protected basicColumns(js: ArrayLike<number>): Float64Array[] {
    const nb = js.length
    const rank = this.rank
    const out = Array.from({ length: nb }, () => new Float64Array(this.u))
    if (nb === 0) return out
    let from = rank
    for (let b = 0; b < nb; b++) from = Math.min(from, this.pos[js[b]])
    if (from < rank) {
      const y = new Float64Array(rank * nb) // row-major: y[k·nb + b]
      for (let b = 0; b < nb; b++) {
        const p = this.pos[js[b]]
        if (p < rank) y[p * nb + b] = 1
      }
      this.solveBlock(y, nb, from)
      const perm = this.f.perm
      for (let k = 0; k < rank; k++) for (let b = 0; b < nb; b++) out[b][perm[k]] = y[k * nb + b]
    }
    return out
  }

  /**
   * max_j Σ_i |(R⁻¹)_ij|·w_i over R₁₁ (pivot order, w per pivot position): the
   * 1-norm of diag(w)·R⁻¹, by back-substitution on blocks of unit columns.
   */
  inverseNorm1(w: Float64Array): number {
    const rank = this.rank
    const nb = BLOCK
    let best = 0
    for (let j0 = 0; j0 < rank; j0 += nb) {
      const cnt = Math.min(nb, rank - j0)
      const last = j0 + cnt - 1
      const x = new Float64Array((last + 1) * cnt)
      for (let b = 0; b < cnt; b++) x[(j0 + b) * cnt + b] = 1
      this.backward(x, cnt, last)
      for (let b = 0; b < cnt; b++) {
        let s = 0
        for (let i = 0; i <= j0 + b; i++) s += Math.abs(x[i * cnt + b]) * w[i]
        if (s > best) best = s
      }
    }
    return best
  }

  /** Qxx·v for v in the caller's order. */
  private apply(v: Float64Array): Float64Array {
    const rank = this.rank
    const perm = this.f.perm
    const y = new Float64Array(rank)
    for (let k = 0; k < rank; k++) y[k] = v[perm[k]]
    this.solveBlock(y, 1, 0)
    const out = new Float64Array(this.u)
    for (let k = 0; k < rank; k++) out[perm[k]] = y[k]
    return out
  }

  /**
   * In place Y ← R⁻¹R⁻ᵀY for nb right-hand sides (row-major, pivot order),
   * whose rows above `from` are zero.
   */
  private solveBlock(y: Float64Array, nb: number, from: number): void {
    this.forward(y, nb, from)
    this.backward(y, nb, this.rank - 1)
  }

  /** Y ← R⁻ᵀY (rows above `from` zero); column k of R is row k of Rᵀ. */
  private forward(y: Float64Array, nb: number, from: number): void {
    const { rv, rOff, top } = this
    const s = new Float64Array(nb)
    for (let k = from; k < this.rank; k++) {
      const o = rOff[k]
      const yk = k * nb
      for (let b = 0; b < nb; b++) s[b] = y[yk + b]
      for (let i = Math.max(top[k], from); i < k; i++) {
        const r = rv[o + i]
        const yi = i * nb
        for (let b = 0; b < nb; b++) s[b] -= r * y[yi + b]
      }
      const d = rv[o + k]
      for (let b = 0; b < nb; b++) y[yk + b] = s[b] / d
    }
  }

  /** Y ← R⁻¹Y on rows 0..last (rows below last zero), column by column. */
  private backward(y: Float64Array, nb: number, last: number): void {
    const { rv, rOff, top } = this
    const s = new Float64Array(nb)
    for (let k = last; k >= 0; k--) {
      const o = rOff[k]
      const yk = k * nb
      const d = rv[o + k]
      let any = false
      for (let b = 0; b < nb; b++) {
        s[b] = y[yk + b] /= d
        if (s[b] !== 0) any = true
      }
      if (!any) continue
      for (let i = top[k]; i < k; i++) {
        const r = rv[o + i]
        const yi = i * nb
        for (let b = 0; b < nb; b++) y[yi + b] -= s[b] * r
      }
    }
  }
}
