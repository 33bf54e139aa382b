// Gauss–Newton least squares on a whitened, linearized model, solved each
// iteration with the pivoted Householder QR of ./qr (the normal equations AᵀPA
// are never formed). Free networks get the minimum-norm (inner-constraint)
// solution by an S-transformation of the basic QR solution and its cofactor
// matrix onto the datum defined by the null-space vectors G and weights B.
//
// Sources: Teunissen, P.J.G. (2000) Adjustment Theory, Delft University Press
// (Gauss–Newton iteration, ch. 4, from memory); Baarda, W. (1973)
// S-transformations and criterion matrices, Netherlands Geodetic Commission,
// Publications on Geodesy 5(1): x_S = (I − G(BᵀG)⁻¹Bᵀ)·x, Qxx_S = S·Qxx·Sᵀ.

import { Cofactor, type CofactorMatrix } from './cofactor'
import { compressRows, factorize, solve, type QrFactorization } from './qr'
import { estimateInverseNorm1, normR1 } from './sparse/condition'
import { factorizeSparse, newWorkspace, solveSparse, type SparseFactor } from './sparse/multifrontal'
import { SparseCofactor } from './sparse/selinv'
import { analyse, type SparseRows, type Symbolic } from './sparse/symbolic'

/** One linearized observation: a·dx ≈ l, unwhitened (metres / radians). */
export interface LinearRow {
  cols: number[]
  coef: number[]
  /** l = observed − computed at the linearization point */
  misclosure: number
  sigma: number
  computed: number
}

export interface NonlinearProblem {
  u: number
  /** surveyor-readable name of each unknown, e.g. "station K7 (north)" */
  labels: string[]
  /** per unknown: convergence threshold (metres or radians) */
  tolerance: Float64Array
  x0: Float64Array
  linearize(x: Float64Array): LinearRow[]
  /** free datum: candidate null-space vectors at x and the datum weights (1 = takes part) */
  nullSpace?(x: Float64Array): { g: Float64Array[]; weights: Float64Array }
  /** groups of unknowns whose mutual cofactors the caller will read (stations, connected pairs) */
  cofactorGroups?(): Iterable<ArrayLike<number>>
  /**
   * block of each unknown (a station's coordinates and the orientations of its
   * direction sets): the sparse ordering keeps a block's unknowns together
   */
  blocks?: ArrayLike<number>
}

/**
 * Which orthogonal factorization solves each iteration: 'sparse' (ordering,
 * multifrontal QR, selected inverse; ./sparse) or 'dense' (row compression and
 * pivoted QR on a u×u array, ./qr — kept as the oracle for the tests). 'auto'
 * takes the sparse one for every network.
 */
export type FactorizationChoice = 'auto' | 'dense' | 'sparse'
export interface SolveOptions {
  factorization?: FactorizationChoice
}

export interface LsqTimings {
  /** ordering and symbolic analysis (sparse path), included in factorizationMs */
  orderingMs: number
  factorizationMs: number
  cofactorMs: number
}

export type LsqOutcome =
  | {
      ok: true
      x: Float64Array
      iterations: number
      rank: number
      datumDefect: number
      /**
       * cofactor matrix of the unknowns (σ0 = 1 a priori), S-transformed for a free
       * network: entries within each row's unknowns, the diagonal and the caller's
       * cofactorGroups are selected; whole columns on demand
       */
      qxx: CofactorMatrix
      /** linearization at the adjusted unknowns: misclosure = −v */
      rows: LinearRow[]
      conditionEstimate: number
      dominant: number | null
      timings: LsqTimings
    }
  | { ok: false; code: 'singular'; dependent: number[] }
  | { ok: false; code: 'not_converged'; iterations: number; maxStep: number }

export function solveNonlinear(problem: NonlinearProblem, maxIterations: number, options: SolveOptions = {}): LsqOutcome {
  if ((options.factorization ?? 'auto') !== 'dense') return solveNonlinearSparse(problem, maxIterations)
  const u = problem.u
  const x = Float64Array.from(problem.x0)
  const timings: LsqTimings = { orderingMs: 0, factorizationMs: 0, cofactorMs: 0 }
  let order: Int32Array | null = null
  let lastStep = Infinity
  for (let it = 1; it <= maxIterations; it++) {
    const rows = problem.linearize(x)
    // rows sorted by their first unknown keep each reflector's rows close together
    if (!order) order = rowOrder(rows)
    const t0 = performance.now()
    const columnNorms = new Float64Array(u)
    const whitened = Array.from(order, (idx) => {
      const row = rows[idx]
      const w = 1 / row.sigma
      const values = row.coef.map((c) => c * w)
      for (let c = 0; c < values.length; c++) columnNorms[row.cols[c]] += values[c] * values[c]
      return { cols: row.cols, values, rhs: row.misclosure * w }
    })
    for (let j = 0; j < u; j++) columnNorms[j] = Math.sqrt(columnNorms[j])
    let datum: Datum | null = null
    if (problem.nullSpace) datum = buildDatum(problem.nullSpace(x), rows, u)
    const defect = datum ? datum.g.length : 0
    // A free network's datum defect is removed exactly: the inner constraints
    // Bᵀ·dx = 0 join the rows (scaled like the design's columns), so the
    // factorization is of full rank and no roundoff-sized pivot is divided by;
    // the S-transformation below then gives the same solution and cofactors
    // as the minimum-norm ones (S·(AᵀA + BBᵀ)⁻¹·Sᵀ = Q_S, (AᵀA + BBᵀ)⁻¹ being a
    // g-inverse of AᵀA when BᵀG is regular — Koch, K.-R. (1999) Parameter
    // Estimation and Hypothesis Testing in Linear Models, 2nd ed., Springer, §3.5, from memory).
    if (datum) {
      let mean = 0
      for (let j = 0; j < u; j++) mean += columnNorms[j] / u
      for (const b of datum.b) {
        const cols: number[] = []
        const values: number[] = []
        let norm = 0
        for (let j = 0; j < u; j++) if (b[j] !== 0) norm += b[j] * b[j]
        norm = Math.sqrt(norm)
        for (let j = 0; j < u; j++) if (b[j] !== 0) {
          cols.push(j)
          values.push((b[j] / norm) * (mean || 1))
        }
        whitened.push({ cols, values, rhs: 0 })
      }
    }
    // tall sparse system → square R₀ by row reflections, then pivoted Householder QR on R₀
    const compressed = compressRows(whitened, u)
    const f = factorize(compressed.r0, u, u, compressed.qtb)
    timings.factorizationMs += performance.now() - t0
    if (f.rank < u) {
      return { ok: false, code: 'singular', dependent: Array.from(f.perm.subarray(f.rank)) }
    }
    let dx = solve(f)
    if (datum) dx = sTransformVector(datum, dx)
    lastStep = applyStep(x, dx, problem.tolerance)
    if (lastStep < 1) {
      const t1 = performance.now()
      const qxx = new Cofactor(f, datum)
      const groups: ArrayLike<number>[] = rows.map((row) => row.cols)
      if (problem.cofactorGroups) for (const g of problem.cofactorGroups()) groups.push(g)
      qxx.select(groups)
      const health = condition(f, columnNorms, qxx)
      timings.cofactorMs += performance.now() - t1
      return solved(problem, x, it, f.rank, defect, qxx, health, timings)
    }
  }
  return { ok: false, code: 'not_converged', iterations: maxIterations, maxStep: lastStep }
}

/**
 * x ← x + dx; returns the largest |dxⱼ| / toleranceⱼ, so the iteration has
 * converged when it is below 1 (every unknown moved less than its tolerance).
 */
function applyStep(x: Float64Array, dx: Float64Array, tolerance: ArrayLike<number>): number {
  let step = 0
  for (let j = 0; j < x.length; j++) {
    x[j] += dx[j]
    const r = Math.abs(dx[j]) / tolerance[j]
    if (r > step) step = r
  }
  return step
}

/** The outcome of a converged iteration, with the linearization at the adjusted unknowns. */
function solved(
  problem: NonlinearProblem,
  x: Float64Array,
  iterations: number,
  rank: number,
  datumDefect: number,
  qxx: CofactorMatrix,
  health: { kappa: number; dominant: number | null },
  timings: LsqTimings,
): LsqOutcome {
  return {
    ok: true, x, iterations, rank, datumDefect, qxx,
    rows: problem.linearize(x),
    conditionEstimate: health.kappa,
    dominant: health.dominant,
    timings,
  }
}

function rowOrder(rows: LinearRow[]): Int32Array {
  const first = rows.map((r) => {
    let f = Infinity
    for (const c of r.cols) if (c < f) f = c
    return f
  })
  const idx = Array.from(rows.keys())
  idx.sort((p, q) => first[p] - first[q] || p - q)
  return Int32Array.from(idx)
}

interface Datum {
  g: Float64Array[]
  weights: Float64Array
  /** K = G·(BᵀG)⁻¹, L = B = diag(weights)·G; S = I − K·Lᵀ */
  k: Float64Array[]
  b: Float64Array[]
}

/** Keeps only the candidate vectors that are in the null space of A (‖A·g‖ ≈ 0). */
function buildDatum(ns: { g: Float64Array[]; weights: Float64Array }, rows: LinearRow[], u: number): Datum {
  const g = ns.g.filter((vec) => {
    let num = 0
    let den = 0
    for (const row of rows) {
      let s = 0
      let sa = 0
      for (let c = 0; c < row.cols.length; c++) {
        s += (row.coef[c] * vec[row.cols[c]]) / row.sigma
        sa += Math.abs((row.coef[c] * vec[row.cols[c]]) / row.sigma)
      }
      num += s * s
      den += sa * sa
    }
    return den === 0 || num <= 1e-16 * den
  })
  const d = g.length
  const b = g.map((vec) => vec.map((v, i) => v * ns.weights[i]))
  // M = BᵀG (d×d), K = G·M⁻¹
  const mm: number[][] = []
  for (let p = 0; p < d; p++) {
    mm.push([])
    for (let q = 0; q < d; q++) {
      let s = 0
      for (let i = 0; i < u; i++) s += b[p][i] * g[q][i]
      mm[p].push(s)
    }
  }
  const inv = smallInverse(mm)
  const k: Float64Array[] = []
  for (let q = 0; q < d; q++) {
    const col = new Float64Array(u)
    for (let p = 0; p < d; p++) {
      const c = inv[p][q]
      for (let i = 0; i < u; i++) col[i] += g[p][i] * c
    }
    k.push(col)
  }
  return { g, weights: ns.weights, k, b }
}

function smallInverse(m: number[][]): number[][] {
  const d = m.length
  const a = m.map((row, i) => [...row, ...Array.from({ length: d }, (_, j) => (i === j ? 1 : 0))])
  for (let c = 0; c < d; c++) {
    let p = c
    for (let r = c + 1; r < d; r++) if (Math.abs(a[r][c]) > Math.abs(a[p][c])) p = r
    ;[a[c], a[p]] = [a[p], a[c]]
    const piv = a[c][c]
    for (let j = 0; j < 2 * d; j++) a[c][j] /= piv
    for (let r = 0; r < d; r++) {
      if (r === c) continue
      const fct = a[r][c]
      for (let j = 0; j < 2 * d; j++) a[r][j] -= fct * a[c][j]
    }
  }
  return a.map((row) => row.slice(d))
}

function sTransformVector(datum: Datum, x: Float64Array): Float64Array {
  const out = Float64Array.from(x)
  for (let q = 0; q < datum.g.length; q++) {
    let s = 0
    for (let i = 0; i < x.length; i++) s += datum.b[q][i] * x[i]
    for (let i = 0; i < x.length; i++) out[i] -= datum.k[q][i] * s
  }
  return out
}

/**
 * 1-norm condition estimate κ₁ = ‖R·D⁻¹‖₁·‖D·R⁻¹‖₁ of the column-scaled whitened
 * design (D = column norms, so units of the unknowns do not count), and the
 * unknown with the largest scaled variance D²·Qxx, which dominates it.
 */
function condition(f: QrFactorization, norms: Float64Array, qxx: Cofactor): { kappa: number; dominant: number | null } {
  const r = f.rank
  const m = f.m
  const u = f.n
  if (r === 0) return { kappa: Infinity, dominant: null }
  let normR = 0
  for (let j = 0; j < r; j++) {
    const dj = norms[f.perm[j]] || 1
    let s = 0
    for (let i = 0; i <= j; i++) s += Math.abs(f.a[j * m + i])
    normR = Math.max(normR, s / dj)
  }
  const w = new Float64Array(r)
  for (let i = 0; i < r; i++) w[i] = norms[f.perm[i]] || 1
  const normInv = qxx.inverseNorm1(w)
  let dominant: number | null = null
  let worst = -1
  for (let j = 0; j < u; j++) {
    const v = qxx.get(j, j) * norms[j] * norms[j]
    if (v > worst) {
      worst = v
      dominant = j
    }
  }
  return { kappa: normR * normInv, dominant }
}

/**
 * The same Gauss–Newton iteration on the sparse path: the symbolic analysis
 * (ordering, elimination tree, pattern of R) once, a multifrontal QR each
 * iteration, the selected inverse and a Hager–Higham condition estimate at the end.
 */
function solveNonlinearSparse(problem: NonlinearProblem, maxIterations: number): LsqOutcome {
  const u = problem.u
  const x = Float64Array.from(problem.x0)
  const timings: LsqTimings = { orderingMs: 0, factorizationMs: 0, cofactorMs: 0 }
  let sym: Symbolic | null = null
  const work = newWorkspace()
  let previous: SparseFactor | null = null
  let lastStep = Infinity
  for (let it = 1; it <= maxIterations; it++) {
    const rows = problem.linearize(x)
    const t0 = performance.now()
    const { sparse, columnNorms } = whitenRows(rows, u)
    if (!sym) {
      const ta = performance.now()
      sym = analyse(sparse, u, problem.blocks ?? Int32Array.from({ length: u }, (_, j) => j))
      timings.orderingMs = performance.now() - ta
    }
    const f = factorizeSparse(sym, sparse, columnNorms, 1e-10, work, previous)
    previous = f
    timings.factorizationMs += performance.now() - t0

    let datum: Datum | null = null
    if (problem.nullSpace) datum = buildDatum(problem.nullSpace(x), rows, u)
    const defect = datum ? datum.g.length : 0
    if (f.rank < u - defect) {
      return { ok: false, code: 'singular', dependent: Array.from(f.perm.subarray(f.rank)) }
    }
    let dx = solveSparse(f)
    if (datum) dx = sTransformVector(datum, dx)
    lastStep = applyStep(x, dx, problem.tolerance)
    if (lastStep < 1) {
      const t1 = performance.now()
      const qxx = new SparseCofactor(f, datum)
      qxx.select()
      const health = sparseCondition(f, columnNorms, qxx)
      timings.cofactorMs += performance.now() - t1
      return solved(problem, x, it, f.rank, defect, qxx, health, timings)
    }
  }
  return { ok: false, code: 'not_converged', iterations: maxIterations, maxStep: lastStep }
}

/** Whitened rows (1/σ) in compressed form, and the whitened column norms. */
function whitenRows(rows: LinearRow[], u: number): { sparse: SparseRows; columnNorms: Float64Array } {
  const m = rows.length
  const rowPtr = new Int32Array(m + 1)
  for (let i = 0; i < m; i++) rowPtr[i + 1] = rowPtr[i] + rows[i].cols.length
  const rowCol = new Int32Array(rowPtr[m])
  const rowVal = new Float64Array(rowPtr[m])
  const rhs = new Float64Array(m)
  const columnNorms = new Float64Array(u)
  for (let i = 0; i < m; i++) {
    const row = rows[i]
    const w = 1 / row.sigma
    let o = rowPtr[i]
    for (let c = 0; c < row.cols.length; c++, o++) {
      const v = row.coef[c] * w
      rowCol[o] = row.cols[c]
      rowVal[o] = v
      columnNorms[row.cols[c]] += v * v
    }
    rhs[i] = row.misclosure * w
  }
  for (let j = 0; j < u; j++) columnNorms[j] = Math.sqrt(columnNorms[j])
  return { sparse: { m, rowPtr, rowCol, rowVal, rhs }, columnNorms }
}

/** κ₁ estimate of the column-scaled R and the unknown with the largest scaled variance. */
function sparseCondition(f: SparseFactor, norms: Float64Array, qxx: SparseCofactor): { kappa: number; dominant: number | null } {
  if (f.rank === 0) return { kappa: Infinity, dominant: null }
  const kappa = normR1(f, norms) * estimateInverseNorm1(f, norms)
  let dominant: number | null = null
  let worst = -1
  for (let j = 0; j < f.u; j++) {
    const v = qxx.get(j, j) * norms[j] * norms[j]
    if (v > worst) {
      worst = v
      dominant = j
    }
  }
  return { kappa, dominant }
}
