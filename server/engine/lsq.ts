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
import { backSolvePermuted, compressRows, factorize, solve, type QrFactorization } from './qr'
import { estimateInverseNorm1, normR1 } from './sparse/condition'
import { backward, factorizeSparse, forward, newWorkspace, solveSparse, type SparseFactor } from './sparse/multifrontal'
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
  /**
   * optional fast path: the whitened rows (a/σ, l/σ) of linearize(x) in the same
   * order, written into typed arrays (`reuse`, the previous call's result, is
   * overwritten: the pattern does not change between iterations)
   */
  linearizeWhitened?(x: Float64Array, reuse: SparseRows | null): SparseRows
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
  const dense = (options.factorization ?? 'auto') === 'dense'
  const u = problem.u
  const x = Float64Array.from(problem.x0)
  const timings: LsqTimings = { orderingMs: 0, factorizationMs: 0, cofactorMs: 0 }
  const factorizer = dense ? denseFactorizer(u) : sparseFactorizer(problem, timings)
  let buffers: RowBuffers | null = null
  let lastStep = Infinity
  for (let it = 1; it <= maxIterations; it++) {
    buffers = linearizeRows(problem, x, buffers)
    const t0 = performance.now()
    let datum: Datum | null = null
    if (problem.nullSpace) datum = buildDatum(problem.nullSpace(x), buffers, u)
    const defect = datum ? datum.g.length : 0
    const f = factorizer.factorize(buffers, datum)
    timings.factorizationMs += performance.now() - t0
    if (f.rank < u - defect) return { ok: false, code: 'singular', dependent: f.dependent() }
    let dx = f.step()
    if (datum) dx = sTransformVector(datum, dx)
    lastStep = applyStep(x, dx, problem.tolerance)
    if (lastStep < 1) {
      const t1 = performance.now()
      const { qxx, health } = f.cofactor(datum, problem)
      timings.cofactorMs += performance.now() - t1
      return solved(problem, x, it, f.rank, defect, qxx, health, timings)
    }
    if (it < maxIterations) buffers = refineWithFactor(problem, x, f, datum, buffers, lastStep, timings)
  }
  return { ok: false, code: 'not_converged', iterations: maxIterations, maxStep: lastStep }
}

/**
 * Steps that reuse the last factorization R (of the Jacobian at an earlier
 * point) while they contract fast: dx = (RᵀR)⁻¹·Ã(x)ᵀ·l̃(x), two triangular
 * solves instead of a new factorization. Its fixed point is the Gauss–Newton
 * one (Ã(x)ᵀ·l̃(x) = 0 is the same condition), only the speed of approach
 * differs: the contraction factor is about the relative change of the
 * Jacobian since R was formed (Dennis, J.E. & Schnabel, R.B. (1983) Numerical
 * Methods for Unconstrained Optimization and Nonlinear Equations, Prentice-Hall,
 * §5.4 and §10.1 — the chord and Gauss–Newton methods — from memory). The steps
 * stop once they are 1000× below the convergence tolerance, when one contracts
 * by less than 4× (a step that grows is undone), or after 12; the next
 * iteration then factorizes afresh at x, and convergence is still decided only
 * by the full Gauss–Newton step of a fresh factorization — so the result, its
 * cofactors and the convergence rule are those of plain Gauss–Newton; the
 * stop at 1000× below the tolerance also puts the final linearization point
 * within rounding of the solution, on both paths alike.
 */
function refineWithFactor(
  problem: NonlinearProblem,
  x: Float64Array,
  f: FactoredProblem,
  datum: Datum | null,
  buffers: RowBuffers,
  lastFullStep: number,
  timings: LsqTimings,
): RowBuffers {
  const u = problem.u
  let previous = lastFullStep
  let rows = buffers
  const g = new Float64Array(u)
  for (let k = 0; k < 12 && previous >= 1e-3; k++) {
    rows = linearizeRows(problem, x, rows)
    const t0 = performance.now()
    g.fill(0)
    const { rowPtr, rowCol, rowVal, rhs, m } = rows.sparse
    for (let i = 0; i < m; i++) {
      const l = rhs[i]
      if (l === 0) continue
      for (let q = rowPtr[i]; q < rowPtr[i + 1]; q++) g[rowCol[q]] += rowVal[q] * l
    }
    let dx = f.normalStep(g)
    if (datum) dx = sTransformVector(datum, dx)
    timings.factorizationMs += performance.now() - t0
    const step = applyStep(x, dx, problem.tolerance)
    if (!(step < previous)) {
      for (let j = 0; j < u; j++) x[j] -= dx[j]
      break
    }
    const ratio = step / previous
    previous = step
    if (ratio > 0.25) break
  }
  return rows
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

interface Datum {
  g: Float64Array[]
  weights: Float64Array
  /** K = G·(BᵀG)⁻¹, L = B = diag(weights)·G; S = I − K·Lᵀ */
  k: Float64Array[]
  b: Float64Array[]
}

/** Keeps only the candidate vectors that are in the null space of A (‖A·g‖ ≈ 0). */
function buildDatum(ns: { g: Float64Array[]; weights: Float64Array }, buffers: RowBuffers, u: number): Datum {
  const { m, rowPtr, rowCol, rowVal } = buffers.sparse
  const g = ns.g.filter((vec) => {
    let num = 0
    let den = 0
    for (let i = 0; i < m; i++) {
      let s = 0
      let sa = 0
      for (let q = rowPtr[i]; q < rowPtr[i + 1]; q++) {
        const t = rowVal[q] * vec[rowCol[q]]
        s += t
        sa += Math.abs(t)
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

/** The whitened rows of one linearization (CSR) and the whitened column norms. */
export interface RowBuffers {
  sparse: SparseRows
  columnNorms: Float64Array
}

/**
 * Ã(x), l̃(x): the problem's own typed-array linearization when it has one
 * (no object per row), else its LinearRow[] whitened here. `reuse` is the
 * previous iteration's buffers, overwritten (the row pattern does not change).
 */
function linearizeRows(problem: NonlinearProblem, x: Float64Array, reuse: RowBuffers | null): RowBuffers {
  const u = problem.u
  if (problem.linearizeWhitened) {
    const sparse = problem.linearizeWhitened(x, reuse?.sparse ?? null)
    const columnNorms = reuse ? reuse.columnNorms.fill(0) : new Float64Array(u)
    const { rowCol, rowVal } = sparse
    for (let q = 0; q < rowCol.length; q++) columnNorms[rowCol[q]] += rowVal[q] * rowVal[q]
    for (let j = 0; j < u; j++) columnNorms[j] = Math.sqrt(columnNorms[j])
    return { sparse, columnNorms }
  }
  return whitenRows(problem.linearize(x), u)
}

/** Whitened rows (1/σ) in compressed form, and the whitened column norms. */
function whitenRows(rows: LinearRow[], u: number): RowBuffers {
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

/** One factorization of the whitened design, dense or sparse, behind the same calls. */
interface FactoredProblem {
  rank: number
  /** caller's unknowns that got no pivot */
  dependent(): number[]
  /** basic least-squares solution of Ã·dx ≈ l̃ (dependent unknowns zero) */
  step(): Float64Array
  /** (RᵀR)⁻¹·g (dependent unknowns zero), for the steps that reuse R */
  normalStep(g: Float64Array): Float64Array
  /** selected Qxx (S-transformed for a free datum), κ₁ and the dominant unknown */
  cofactor(datum: Datum | null, problem: NonlinearProblem): { qxx: CofactorMatrix; health: { kappa: number; dominant: number | null } }
}

interface Factorizer {
  factorize(rows: RowBuffers, datum: Datum | null): FactoredProblem
}

/**
 * Dense path (the oracle): rows sorted by their first unknown, compressed into a
 * square R₀ and factorized with column pivoting on a u×u array (./qr). A free
 * network's inner constraints Bᵀ·dx = 0 join the rows.
 */
function denseFactorizer(u: number): Factorizer {
  let order: Int32Array | null = null
  return {
    factorize({ sparse, columnNorms }, datum) {
      const { m, rowPtr, rowCol, rowVal, rhs } = sparse
      // rows sorted by their first unknown keep each reflector's rows close together
      if (!order) {
        const first = new Float64Array(m)
        for (let i = 0; i < m; i++) {
          let f = Infinity
          for (let q = rowPtr[i]; q < rowPtr[i + 1]; q++) if (rowCol[q] < f) f = rowCol[q]
          first[i] = f
        }
        const idx = Array.from({ length: m }, (_, i) => i)
        idx.sort((p, q) => first[p] - first[q] || p - q)
        order = Int32Array.from(idx)
      }
      const whitened = Array.from(order, (i) => ({
        cols: Array.from(rowCol.subarray(rowPtr[i], rowPtr[i + 1])),
        values: Array.from(rowVal.subarray(rowPtr[i], rowPtr[i + 1])),
        rhs: rhs[i],
      }))
      // A free network's datum defect is removed exactly: the inner constraints
      // Bᵀ·dx = 0 join the rows (scaled like the design's columns), so the
      // factorization is of full rank and no roundoff-sized pivot is divided by;
      // the S-transformation then gives the same solution and cofactors as the
      // minimum-norm ones (S·(AᵀA + BBᵀ)⁻¹·Sᵀ = Q_S, (AᵀA + BBᵀ)⁻¹ being a
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
      return {
        rank: f.rank,
        dependent: () => Array.from(f.perm.subarray(f.rank)),
        step: () => solve(f),
        normalStep: (g) => normalSolveDense(f, g),
        cofactor(d, problem) {
          const qxx = new Cofactor(f, d)
          const groups: ArrayLike<number>[] = []
          for (let i = 0; i < m; i++) groups.push(rowCol.subarray(rowPtr[i], rowPtr[i + 1]))
          if (problem.cofactorGroups) for (const g of problem.cofactorGroups()) groups.push(g)
          qxx.select(groups)
          return { qxx, health: denseCondition(f, columnNorms, qxx) }
        },
      }
    },
  }
}

/** (RᵀR)⁻¹·g on the dense pivoted factor: Rᵀz = Πᵀg, R·y = z. */
function normalSolveDense(f: QrFactorization, g: Float64Array): Float64Array {
  const { m, rank, a, perm } = f
  const y = new Float64Array(rank)
  for (let k = 0; k < rank; k++) y[k] = g[perm[k]]
  for (let k = 0; k < rank; k++) {
    const c = k * m
    let v = y[k]
    for (let i = 0; i < k; i++) v -= a[c + i] * y[i]
    y[k] = v / a[c + k]
  }
  return backSolvePermuted(f, y)
}

/**
 * Sparse path: the symbolic analysis (ordering, elimination tree, pattern of R)
 * once, a multifrontal QR each iteration, the selected inverse and a
 * Hager–Higham condition estimate at the end. A free network's datum defect is
 * removed exactly, without a rank threshold: d unknowns that fix the datum
 * (G restricted to them is regular) are held at zero in the basic solution —
 * a minimal-constraint datum — and the S-transformation carries the solution
 * and the cofactors onto the inner constraints, the same as the dense path's
 * (the S-transformed result does not depend on which minimal datum was taken:
 * Baarda 1973). Dense constraint rows would fill R completely.
 */
function sparseFactorizer(problem: NonlinearProblem, timings: LsqTimings): Factorizer {
  const u = problem.u
  let sym: Symbolic | null = null
  const work = newWorkspace()
  let previous: SparseFactor | null = null
  return {
    factorize({ sparse, columnNorms }, datum) {
      if (!sym) {
        const ta = performance.now()
        sym = analyse(sparse, u, problem.blocks ?? Int32Array.from({ length: u }, (_, j) => j))
        timings.orderingMs = performance.now() - ta
      }
      const held = datum ? datumColumns(datum, u) : null
      const f = factorizeSparse(sym, sparse, columnNorms, 1e-10, work, previous, held)
      previous = f
      return {
        rank: f.rank,
        dependent: () => {
          const out: number[] = []
          for (let k = f.rank; k < u; k++) if (!held || !held[f.perm[k]]) out.push(f.perm[k])
          return out
        },
        step: () => solveSparse(f),
        normalStep: (g) => normalSolveSparse(f, g),
        cofactor(d) {
          const qxx = new SparseCofactor(f, d)
          qxx.select()
          return { qxx, health: sparseCondition(f, columnNorms, qxx) }
        },
      }
    },
  }
}

/**
 * d unknowns that fix a free network's datum: column-pivoted Gram–Schmidt on
 * the rows of Gᵀ (each null-space vector normalized), restricted to the
 * unknowns that take part in the datum; the pivots make G on them regular and
 * well conditioned (stations far apart for the rotation and scale).
 */
function datumColumns(datum: Datum, u: number): Uint8Array {
  const d = datum.g.length
  const held = new Uint8Array(u)
  if (d === 0) return held
  // columns of Gᵀ: v_j = (g_1j, …, g_dj), rows normalized
  const v = new Float64Array(u * d)
  for (let p = 0; p < d; p++) {
    let n = 0
    for (let j = 0; j < u; j++) n += datum.g[p][j] ** 2
    n = Math.sqrt(n) || 1
    for (let j = 0; j < u; j++) v[j * d + p] = datum.b[p][j] !== 0 ? datum.g[p][j] / n : 0
  }
  const basis: Float64Array[] = []
  for (let k = 0; k < d; k++) {
    let best = -1
    let bestNorm = 0
    for (let j = 0; j < u; j++) {
      if (held[j]) continue
      let n = 0
      for (let p = 0; p < d; p++) n += v[j * d + p] ** 2
      if (n > bestNorm * (1 + 1e-12)) {
        bestNorm = n
        best = j
      }
    }
    if (best < 0 || bestNorm === 0) break
    held[best] = 1
    const q = v.slice(best * d, best * d + d)
    const qn = Math.sqrt(bestNorm)
    for (let p = 0; p < d; p++) q[p] /= qn
    basis.push(q)
    // remove the chosen direction from every column
    for (let j = 0; j < u; j++) {
      let s = 0
      for (let p = 0; p < d; p++) s += v[j * d + p] * q[p]
      if (s !== 0) for (let p = 0; p < d; p++) v[j * d + p] -= s * q[p]
    }
  }
  return held
}

/** (RᵀR)⁻¹·g on the sparse factor (caller's order): Rᵀy = g, R·x = y. */
function normalSolveSparse(f: SparseFactor, g: Float64Array): Float64Array {
  const { posOf, colAt } = f.sym
  const y = new Float64Array(f.u)
  for (let j = 0; j < f.u; j++) y[posOf[j]] = g[j]
  forward(f, y)
  backward(f, y)
  const out = new Float64Array(f.u)
  for (let p = 0; p < f.u; p++) out[colAt[p]] = y[p]
  return out
}

/**
 * 1-norm condition estimate κ₁ = ‖R·D⁻¹‖₁·‖D·R⁻¹‖₁ of the column-scaled whitened
 * design (D = column norms, so units of the unknowns do not count), and the
 * unknown with the largest scaled variance D²·Qxx, which dominates it.
 */
function denseCondition(f: QrFactorization, norms: Float64Array, qxx: Cofactor): { kappa: number; dominant: number | null } {
  const r = f.rank
  const m = f.m
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
  return { kappa: normR * normInv, dominant: dominantUnknown(qxx, norms) }
}

/** κ₁ estimate of the column-scaled R and the unknown with the largest scaled variance. */
function sparseCondition(f: SparseFactor, norms: Float64Array, qxx: SparseCofactor): { kappa: number; dominant: number | null } {
  if (f.rank === 0) return { kappa: Infinity, dominant: null }
  const kappa = normR1(f, norms) * estimateInverseNorm1(f, norms)
  return { kappa, dominant: dominantUnknown(qxx, norms) }
}

function dominantUnknown(qxx: CofactorMatrix, norms: Float64Array): number | null {
  let dominant: number | null = null
  let worst = -1
  for (let j = 0; j < qxx.u; j++) {
    const v = qxx.get(j, j) * norms[j] * norms[j]
    if (v > worst) {
      worst = v
      dominant = j
    }
  }
  return dominant
}
