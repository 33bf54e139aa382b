// Householder QR with column pivoting for the whitened least-squares problem
// min ‖Ã·dx − l̃‖, in place on a dense column-major Float64Array.
//
// The reflectors are applied to the right-hand side as they are formed, so Q is
// never built; rank is read from the pivoted diagonal. Normal equations are never
// formed. Survey design matrices are very sparse, so each reflector is applied
// only over the rows where its pivot column is non-zero, and columns whose
// non-zero row interval cannot meet those rows are skipped. Column pivoting uses a
// threshold rule: among the columns whose remaining norm is at least
// `pivotThreshold` × the largest, the one earliest in the caller's (fill-reducing)
// order is taken; `pivotThreshold = 1` is the classical largest-norm rule.
// Columns whose remaining norm falls below `rankTolerance` × their initial norm
// are never pivoted and mark the rank defect.
//
// Sources: Businger, P. & Golub, G.H. (1965) Linear least squares solutions by
// Householder transformations, Numerische Mathematik 7, 269–276;
// Golub, G.H. & Van Loan, C.F. (2013) Matrix Computations, 4th ed., §5.2, §5.4
// (from memory); the column-norm downdating safeguard follows
// Drmač, Z. & Bujanović, Z. (2008) On the failure of rank-revealing QR
// factorization software — a case study, ACM TOMS 35(2), doi:10.1145/1377612.1377616.
// Row-interval skipping is common practice in sparse QR (profile methods).

export interface QrOptions {
  /** 0 < τ ≤ 1; 1 = largest-norm pivoting, smaller keeps the caller's column order (less fill) */
  pivotThreshold?: number
  /** a column is rank-deficient when its remaining norm ≤ tolerance × its initial norm */
  rankTolerance?: number
}

export interface QrFactorization {
  m: number
  n: number
  rank: number
  /** factored matrix: R in the upper triangle, Householder vectors below (v_k = 1 implicit) */
  a: Float64Array
  tau: Float64Array
  /** row exchanged with row k just before reflector k */
  rowSwap: Int32Array
  /** perm[k] = caller's column index at pivot position k */
  perm: Int32Array
  /** Qᵀ·rhs, length m */
  qtb: Float64Array
}

const EPS = 2.220446049250313e-16

/**
 * Factorizes A (m×n, column-major, overwritten) and applies Qᵀ to rhs (copied).
 * A·Π = Q·R with Π given by `perm`.
 */
export function factorize(
  a: Float64Array,
  m: number,
  n: number,
  rhs: Float64Array,
  options: QrOptions = {},
): QrFactorization {
  const threshold = options.pivotThreshold ?? 0.1
  const rankTol = options.rankTolerance ?? 1e-10
  const qtb = Float64Array.from(rhs)
  const perm = new Int32Array(n)
  const vn1 = new Float64Array(n)
  const vn2 = new Float64Array(n)
  const norm0 = new Float64Array(n)
  // non-zero row interval of each column among the active rows (conservative)
  const lo = new Int32Array(n)
  const hi = new Int32Array(n)
  const tau = new Float64Array(Math.min(m, n))
  const rowSwap = new Int32Array(Math.min(m, n))
  const rows = new Int32Array(m)
  const tolDowndate = Math.sqrt(EPS)

  for (let j = 0; j < n; j++) {
    perm[j] = j
    const c = j * m
    let s = 0
    let first = m
    let last = -1
    for (let i = 0; i < m; i++) {
      const v = a[c + i]
      if (v !== 0) {
        s += v * v
        if (first === m) first = i
        last = i
      }
    }
    vn1[j] = vn2[j] = norm0[j] = Math.sqrt(s)
    lo[j] = first
    hi[j] = last
  }

  let rank = 0
  const steps = Math.min(m, n)
  for (let k = 0; k < steps; k++) {
    // choose the pivot: classical largest norm when threshold ≥ 1; otherwise the
    // earliest column (caller's order) whose remaining norm relative to its initial
    // norm is within the threshold of the best, which is scale-invariant and keeps fill low
    let maxRel = 0
    let maxNorm = 0
    let argMax = -1
    for (let j = k; j < n; j++) {
      if (!(vn1[j] > rankTol * norm0[j])) continue
      const rel = vn1[j] / norm0[j]
      if (rel > maxRel) maxRel = rel
      if (vn1[j] > maxNorm) {
        maxNorm = vn1[j]
        argMax = j
      }
    }
    if (argMax < 0) break
    let p = argMax
    if (threshold < 1) {
      let best = n
      const limit = threshold * maxRel
      for (let j = k; j < n; j++) {
        if (vn1[j] > rankTol * norm0[j] && vn1[j] >= limit * norm0[j] && perm[j] < best) {
          best = perm[j]
          p = j
        }
      }
    }
    if (p !== k) swapColumns(a, m, k, p, perm, vn1, vn2, norm0, lo, hi)

    const col = k * m
    // rows where the pivot column is non-zero
    let cnt = 0
    const rEnd = Math.min(hi[k], m - 1)
    for (let i = Math.max(k, lo[k]); i <= rEnd; i++) if (a[col + i] !== 0) rows[cnt++] = i
    if (cnt === 0) break
    const s = rows[0]
    rowSwap[k] = s
    if (s !== k) {
      for (let j = k; j < n; j++) {
        const c = j * m
        const t = a[c + k]
        a[c + k] = a[c + s]
        a[c + s] = t
        if (j > k && (lo[j] <= s && s <= hi[j] || lo[j] <= k && k <= hi[j])) {
          if (lo[j] > k) lo[j] = k
          if (hi[j] < s) hi[j] = s
        }
      }
      const t = qtb[k]
      qtb[k] = qtb[s]
      qtb[s] = t
      rows[0] = k
    }
    const maxRow = rows[cnt - 1]

    // Householder vector (LAPACK dlarfg convention)
    const alpha = a[col + k]
    let xnormSq = 0
    for (let t = 1; t < cnt; t++) {
      const v = a[col + rows[t]]
      xnormSq += v * v
    }
    let tk = 0
    if (xnormSq !== 0) {
      const beta = -Math.sign(alpha || 1) * Math.sqrt(alpha * alpha + xnormSq)
      tk = (beta - alpha) / beta
      const scale = 1 / (alpha - beta)
      for (let t = 1; t < cnt; t++) a[col + rows[t]] *= scale
      a[col + k] = beta
    }
    tau[k] = tk

    if (tk !== 0) {
      for (let j = k + 1; j < n; j++) {
        if (hi[j] < k || lo[j] > maxRow) continue
        const c = j * m
        let w = a[c + k]
        for (let t = 1; t < cnt; t++) w += a[col + rows[t]] * a[c + rows[t]]
        if (w === 0) continue
        w *= tk
        a[c + k] -= w
        for (let t = 1; t < cnt; t++) a[c + rows[t]] -= w * a[col + rows[t]]
        if (lo[j] > k) lo[j] = k
        if (hi[j] < maxRow) hi[j] = maxRow
      }
      let w = qtb[k]
      for (let t = 1; t < cnt; t++) w += a[col + rows[t]] * qtb[rows[t]]
      w *= tk
      qtb[k] -= w
      for (let t = 1; t < cnt; t++) qtb[rows[t]] -= w * a[col + rows[t]]
    }

    // downdate remaining column norms; recompute when cancellation makes them unreliable
    for (let j = k + 1; j < n; j++) {
      if (vn1[j] === 0) continue
      const c = j * m
      const r = Math.abs(a[c + k]) / vn1[j]
      let temp = (1 + r) * (1 - r)
      if (temp < 0) temp = 0
      const ratio = vn1[j] / vn2[j]
      if (temp * ratio * ratio <= tolDowndate) {
        let ss = 0
        const e = Math.min(hi[j], m - 1)
        for (let i = Math.max(k + 1, lo[j]); i <= e; i++) {
          const v = a[c + i]
          ss += v * v
        }
        vn1[j] = vn2[j] = Math.sqrt(ss)
      } else {
        vn1[j] *= Math.sqrt(temp)
      }
      if (lo[j] <= k) lo[j] = k + 1
    }
    rank = k + 1
  }
  return { m, n, rank, a, tau, rowSwap, perm, qtb }
}

function swapColumns(
  a: Float64Array,
  m: number,
  k: number,
  p: number,
  perm: Int32Array,
  ...arrays: (Float64Array | Int32Array)[]
): void {
  const ck = k * m
  const cp = p * m
  for (let i = 0; i < m; i++) {
    const t = a[ck + i]
    a[ck + i] = a[cp + i]
    a[cp + i] = t
  }
  const t = perm[k]
  perm[k] = perm[p]
  perm[p] = t
  for (const arr of arrays) {
    const u = arr[k]
    arr[k] = arr[p]
    arr[p] = u
  }
}

/** Diagonal of R in pivot order (first `rank` entries meaningful). */
export function rDiagonal(f: QrFactorization): Float64Array {
  const d = new Float64Array(f.rank)
  for (let k = 0; k < f.rank; k++) d[k] = f.a[k * f.m + k]
  return d
}

/**
 * Basic least-squares solution in the caller's column order: the rank-deficient
 * (never pivoted) columns are set to zero, the rest from R₁₁·x = (Qᵀb)₁.
 */
export function solve(f: QrFactorization): Float64Array {
  return backSolvePermuted(f, f.qtb.slice(0, f.rank))
}

/** R·y = z by back substitution over the rank leading columns (z overwritten), then x = Π·y (length n, zeros beyond the rank). */
export function backSolvePermuted(f: QrFactorization, z: Float64Array): Float64Array {
  const { m, rank, a, perm } = f
  const y = z
  for (let k = rank - 1; k >= 0; k--) {
    const c = k * m
    y[k] /= a[c + k]
    const yk = y[k]
    if (yk !== 0) for (let i = 0; i < k; i++) y[i] -= yk * a[c + i]
  }
  const x = new Float64Array(f.n)
  for (let k = 0; k < rank; k++) x[perm[k]] = y[k]
  return x
}

/** ‖Ã·x − l̃‖² at the solution: the part of Qᵀb that R cannot reach. */
export function residualNormSq(f: QrFactorization): number {
  let s = 0
  for (let i = f.rank; i < f.m; i++) s += f.qtb[i] * f.qtb[i]
  return s
}

/** Applies Qᵀ to a vector of length m in place (used to verify orthogonality). */
export function applyQt(f: QrFactorization, x: Float64Array): void {
  const { m, a, tau, rowSwap } = f
  for (let k = 0; k < f.rank; k++) {
    const s = rowSwap[k]
    if (s !== k) {
      const t = x[k]
      x[k] = x[s]
      x[s] = t
    }
    const tk = tau[k]
    if (tk === 0) continue
    const c = k * m
    let w = x[k]
    for (let i = k + 1; i < m; i++) if (a[c + i] !== 0) w += a[c + i] * x[i]
    w *= tk
    x[k] -= w
    for (let i = k + 1; i < m; i++) if (a[c + i] !== 0) x[i] -= w * a[c + i]
  }
}

/** R₁₁⁻¹ (rank×rank, upper triangular, column-major) by triangular solves. */
export function inverseR(f: QrFactorization): Float64Array {
  const { m, a } = f
  const r = f.rank
  const w = new Float64Array(r * r)
  for (let j = 0; j < r; j++) {
    const cw = j * r
    w[cw + j] = 1
    for (let k = j; k >= 0; k--) {
      const ca = k * m
      const wk = (w[cw + k] /= a[ca + k])
      if (wk !== 0) for (let i = 0; i < k; i++) w[cw + i] -= wk * a[ca + i]
    }
  }
  return w
}

/**
 * Cofactor matrix Qxx = R⁻¹R⁻ᵀ (n×n, column-major, caller's column order) of the
 * whitened problem. Rank-deficient columns get zero rows and columns, i.e. the
 * basic solution's generalized inverse; free-network callers S-transform it.
 */
export function cofactor(f: QrFactorization, rInv: Float64Array = inverseR(f)): Float64Array {
  const r = f.rank
  const n = f.n
  const qp = new Float64Array(r * r)
  // outer products of the columns of R⁻¹: Qxx = Σ_k w_k w_kᵀ (upper part)
  for (let k = 0; k < r; k++) {
    const ck = k * r
    for (let j = 0; j <= k; j++) {
      const s = rInv[ck + j]
      if (s === 0) continue
      const cq = j * r
      for (let i = 0; i <= j; i++) qp[cq + i] += s * rInv[ck + i]
    }
  }
  const q = new Float64Array(n * n)
  const perm = f.perm
  for (let j = 0; j < r; j++) {
    const pj = perm[j]
    for (let i = 0; i <= j; i++) {
      const v = qp[j * r + i]
      const pi = perm[i]
      q[pj * n + pi] = v
      q[pi * n + pj] = v
    }
  }
  return q
}

/**
 * Row-by-row orthogonal compression of a tall sparse whitened system to a square
 * upper-triangular R₀ (n×n, column-major) and Qᵀ·rhs (first n entries), with the
 * squared norm of the annihilated part of the right-hand side. Each incoming row
 * is reduced against the rows of R₀ with 2-element Householder reflections
 * (George, A. & Heath, M.T. (1980) Solution of sparse linear least squares
 * problems using Givens rotations, Linear Algebra and its Applications 34, 69–83);
 * a row reaching an empty slot of R₀ is stored there. Rows sorted by their first
 * unknown keep the work near O(m·b²) for bandwidth b. The pivoted factorize() on
 * R₀ then does the rank detection: A = Q₁[R₀; 0] and R₀·Π = Q₂R give A·Π = Q₁Q₂R.
 */
export function compressRows(
  rows: { cols: ArrayLike<number>; values: ArrayLike<number>; rhs: number }[],
  n: number,
): { r0: Float64Array; qtb: Float64Array; residualSq: number } {
  const r = new Float64Array(n * n) // row-major while building: row operations are contiguous
  const filled = new Uint8Array(n)
  const rowLast = new Int32Array(n).fill(-1)
  const qtb = new Float64Array(n)
  const x = new Float64Array(n)
  let residualSq = 0
  for (const row of rows) {
    let first = n
    let last = -1
    for (let t = 0; t < row.cols.length; t++) {
      const c = row.cols[t]
      x[c] += row.values[t]
      if (c < first) first = c
      if (c > last) last = c
    }
    let b = row.rhs
    let placed = false
    for (let k = first; k <= last; k++) {
      const xk = x[k]
      if (xk === 0) continue
      const base = k * n
      if (!filled[k]) {
        for (let j = k; j <= last; j++) {
          r[base + j] = x[j]
          x[j] = 0
        }
        filled[k] = 1
        rowLast[k] = last
        qtb[k] = b
        placed = true
        break
      }
      // reflection of the pair (R_kk, x_k) onto (ρ, 0)
      const rk = r[base + k]
      const rho = Math.hypot(rk, xk)
      const c = rk / rho
      const s = xk / rho
      const end = Math.max(last, rowLast[k])
      for (let j = k; j <= end; j++) {
        const rj = r[base + j]
        const xj = x[j]
        r[base + j] = c * rj + s * xj
        x[j] = s * rj - c * xj
      }
      x[k] = 0
      const qk = qtb[k]
      qtb[k] = c * qk + s * b
      b = s * qk - c * b
      rowLast[k] = end
      last = end
    }
    if (!placed) residualSq += b * b
    for (let j = first; j <= last; j++) x[j] = 0
  }
  // column-major copy for the pivoted factorization
  const r0 = new Float64Array(n * n)
  for (let i = 0; i < n; i++) {
    const e = rowLast[i]
    for (let j = i; j <= e; j++) r0[j * n + i] = r[i * n + j]
  }
  return { r0, qtb, residualSq }
}
