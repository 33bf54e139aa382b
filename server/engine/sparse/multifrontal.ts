// Multifrontal Householder QR of the whitened sparse design into the static
// supernodal pattern of R (./symbolic). Supernodes are taken in postorder; each
// frontal matrix gathers the observation rows whose first unknown lies in the
// supernode and the (upper-trapezoidal) contribution blocks of its children,
// rows sorted by their first column so that each reflector only touches the
// staircase of rows that can be non-zero. The front is triangularized by
// Householder reflections, the right-hand side carried as an extra column (Q is
// never formed, AᵀA never formed). The rows of the pivot columns are R's rows; the
// rest, again upper trapezoidal, is the contribution block passed to the parent.
//
// Rank: a pivot column whose remaining norm is at most `rankTolerance` × its
// initial (whitened) norm is dependent on the columns before it, exactly the
// dense path's test; it gets no row of R and takes no part later (its unknown is
// set to zero in the basic solution, as the dense path's never-pivoted columns are).
//
// Sources: Matstoms, P. (1994) Sparse QR factorization in MATLAB, ACM TOMS 20(1),
// 136–159 (multifrontal QR); Davis, T.A. (2011) Algorithm 915, SuiteSparseQR,
// ACM TOMS 38(1), 8:1–8:22 (staircase fronts, rank-deficient columns by a
// tolerance on the remaining column norm — Heath's method); Golub, G.H. &
// Van Loan, C.F. (2013) Matrix Computations, 4th ed., §5.1–5.2 (Householder
// vectors) — all from memory.

import type { SparseRows, Symbolic } from './symbolic'

export interface SparseFactor {
  sym: Symbolic
  u: number
  rank: number
  /** R by supernode: npiv × ncols row-major blocks at sym.rOff[s]; row of a dependent column is zero */
  rv: Float64Array
  /** (Qᵀb) at each pivot position */
  qtb: Float64Array
  /** 1 where the position's column is independent (has a row of R) */
  live: Uint8Array
  /** ‖Ã·x − l̃‖² at the solution */
  residualSq: number
  /** perm[k] = caller's unknown at pivot position k: independent ones first, dependent last */
  perm: Int32Array
}

/** Scratch buffers kept between the Gauss–Newton iterations of one network (fewer large allocations, fewer full collections). */
export interface SparseWorkspace {
  front: Float64Array
  cStack: Float64Array
  cLead: Int32Array
}

export function newWorkspace(): SparseWorkspace {
  return { front: new Float64Array(1024), cStack: new Float64Array(1 << 16), cLead: new Int32Array(1 << 12) }
}

/**
 * @param reuse a factorization of the same pattern that is no longer needed: its arrays are overwritten
 * @param held caller's unknowns taken out of the factorization a priori (a free
 *   network's minimal datum): treated as dependent columns, without the rank test
 */
export function factorizeSparse(
  sym: Symbolic,
  rows: SparseRows,
  columnNorms: Float64Array,
  rankTolerance = 1e-10,
  work: SparseWorkspace = newWorkspace(),
  reuse: SparseFactor | null = null,
  held: Uint8Array | null = null,
): SparseFactor {
  const { ns, pivStart, npiv, fPtr, fcol, parent, rPtr, rIdx, rOff, posOf, u } = sym
  const rv = reuse && reuse.sym === sym ? reuse.rv.fill(0) : new Float64Array(sym.rSize)
  const qtb = reuse && reuse.sym === sym ? reuse.qtb.fill(0) : new Float64Array(u)
  const live = reuse && reuse.sym === sym ? reuse.live.fill(0) : new Uint8Array(u)
  let residualSq = 0
  // children's contribution blocks wait for their parent on one stack (postorder:
  // a supernode's children are always the topmost blocks when it is assembled)
  const cRowsOf = new Int32Array(ns)
  const cOff = new Float64Array(ns) // value offset in cStack
  const cLeadOff = new Int32Array(ns) // lead offset in cLead
  let cStack = work.cStack
  let cLead = work.cLead
  let cTop = 0
  let cLeadTop = 0
  const childHead = new Int32Array(ns).fill(-1)
  const childNext = new Int32Array(ns).fill(-1)
  for (let s = ns - 1; s >= 0; s--) {
    const p = parent[s]
    if (p >= 0) {
      childNext[s] = childHead[p]
      childHead[p] = s
    }
  }
  const loc = new Int32Array(u)
  let front = work.front
  const { rowPtr, rowCol, rowVal, rhs } = rows
  let rowLead = new Int32Array(64)
  let rowOrder = new Int32Array(64)
  let rowSrc = new Int32Array(64)
  let rowSub = new Int32Array(64)
  let cntBuf = new Int32Array(64)
  let stairBuf = new Int32Array(64)
  let leadBuf = new Int32Array(64)

  for (let s = 0; s < ns; s++) {
    const f0 = fPtr[s]
    const nc = fPtr[s + 1] - f0
    const np = npiv[s]
    for (let j = 0; j < nc; j++) loc[fcol[f0 + j]] = j
    // rows of the front: observations, then children's contribution rows
    let nr = rPtr[s + 1] - rPtr[s]
    for (let c = childHead[s]; c >= 0; c = childNext[c]) nr += cRowsOf[c]
    if (rowLead.length < nr) {
      const size = Math.max(nr, 2 * rowLead.length)
      rowLead = new Int32Array(size)
      rowOrder = new Int32Array(size)
      rowSrc = new Int32Array(size)
      rowSub = new Int32Array(size)
    }
    if (cntBuf.length < nc + 2) cntBuf = new Int32Array(2 * (nc + 2))
    if (stairBuf.length < nc + 1) stairBuf = new Int32Array(2 * (nc + 1))
    const stair = stairBuf
    orderFrontRows(s, nc, nr, rPtr, rIdx, rowPtr, rowCol, posOf, loc, childHead, childNext, fPtr, npiv, fcol, cRowsOf, cLead, cLeadOff, rowLead, rowSrc, rowSub, rowOrder, cntBuf, stair)
    const ld = nr // column-major leading dimension
    const width = nc + 1 // + right-hand side
    const size = ld * width
    if (front.length < size) front = new Float64Array(Math.max(size, 2 * front.length))
    else front.fill(0, 0, size)
    const F = front
    assemble(F, ld, nr, nc, rowOrder, rowSrc, rowSub, loc, posOf, rowPtr, rowCol, rowVal, rhs, fPtr, npiv, fcol, cOff, cLead, cLeadOff, cStack)
    // the children's blocks are the top of the stack: release them
    for (let c = childHead[s]; c >= 0; c = childNext[c]) {
      if (cOff[c] < cTop) cTop = cOff[c]
      if (cLeadOff[c] < cLeadTop) cLeadTop = cLeadOff[c]
    }

    // Householder triangularization on the staircase
    if (leadBuf.length < nr) leadBuf = new Int32Array(2 * nr)
    const lead = leadBuf
    const row = triangularize(F, ld, nr, nc, np, stair, lead, pivStart[s], live, held, sym.colAt, columnNorms, rankTolerance)
    // rows of R for the pivot columns
    const off = rOff[s]
    let t = 0
    while (t < row && lead[t] < np) t++
    storeR(F, ld, nc, t, lead, rv, off, qtb, pivStart[s])
    // the rest is the contribution block (rows t..row) and residual (rows ≥ row)
    const cRows = row - t
    if (parent[s] >= 0) {
      const cw = nc - np + 1
      const need = cTop + cRows * cw
      if (need > cStack.length) {
        const grown = new Float64Array(Math.max(need, 2 * cStack.length))
        grown.set(cStack.subarray(0, cTop))
        cStack = grown
      }
      if (cLeadTop + cRows > cLead.length) {
        const grown = new Int32Array(Math.max(cLeadTop + cRows, 2 * cLead.length))
        grown.set(cLead.subarray(0, cLeadTop))
        cLead = grown
      }
      cOff[s] = cTop
      cLeadOff[s] = cLeadTop
      cRowsOf[s] = cRows
      saveContribution(F, ld, nc, np, t, cRows, lead, cStack, cTop, cLead, cLeadTop)
      cTop = need
      cLeadTop += cRows
    } else {
      for (let q = t; q < row; q++) residualSq += F[nc * ld + q] ** 2
    }
    for (let q = row; q < nr; q++) residualSq += F[nc * ld + q] ** 2
  }
  work.front = front
  work.cStack = cStack
  work.cLead = cLead
  let rank = 0
  for (let p = 0; p < u; p++) rank += live[p]
  const perm = new Int32Array(u)
  let a = 0
  let b = rank
  for (let p = 0; p < u; p++) perm[live[p] ? a++ : b++] = sym.colAt[p]
  return { sym, u, rank, rv, qtb, live, residualSq, perm }
}

/**
 * The rows of front s — its observations, then its children's contribution rows
 * — with the lead column of each (the first that can be non-zero), sorted by
 * lead (counting sort into rowOrder); stair[j] = number of rows whose lead ≤ j.
 */
function orderFrontRows(
  s: number,
  nc: number,
  nr: number,
  rPtr: Int32Array,
  rIdx: Int32Array,
  rowPtr: Int32Array,
  rowCol: Int32Array,
  posOf: Int32Array,
  loc: Int32Array,
  childHead: Int32Array,
  childNext: Int32Array,
  fPtr: Int32Array,
  npiv: Int32Array,
  fcol: Int32Array,
  cRowsOf: Int32Array,
  cLead: Int32Array,
  cLeadOff: Int32Array,
  rowLead: Int32Array,
  rowSrc: Int32Array,
  rowSub: Int32Array,
  rowOrder: Int32Array,
  cnt: Int32Array,
  stair: Int32Array,
): void {
  let r = 0
  for (let t = rPtr[s]; t < rPtr[s + 1]; t++) {
    const i = rIdx[t]
    let lead = nc
    for (let q = rowPtr[i]; q < rowPtr[i + 1]; q++) {
      const l = loc[posOf[rowCol[q]]]
      if (l < lead) lead = l
    }
    rowLead[r] = lead
    rowSrc[r] = -1
    rowSub[r] = i
    r++
  }
  for (let c = childHead[s]; c >= 0; c = childNext[c]) {
    const cf0 = fPtr[c] + npiv[c]
    for (let t = 0; t < cRowsOf[c]; t++) {
      rowLead[r] = loc[fcol[cf0 + cLead[cLeadOff[c] + t]]]
      rowSrc[r] = c
      rowSub[r] = t
      r++
    }
  }
  for (let j = 0; j < nc + 2; j++) cnt[j] = 0
  for (let t = 0; t < nr; t++) cnt[rowLead[t] + 1]++
  for (let j = 0; j <= nc; j++) cnt[j + 1] += cnt[j]
  for (let j = 0; j <= nc; j++) stair[j] = cnt[j + 1]
  for (let t = 0; t < nr; t++) rowOrder[cnt[rowLead[t]]++] = t
}

/** Observation rows and children's contribution rows into the zeroed front, in staircase order. */
function assemble(
  F: Float64Array,
  ld: number,
  nr: number,
  nc: number,
  rowOrder: Int32Array,
  rowSrc: Int32Array,
  rowSub: Int32Array,
  loc: Int32Array,
  posOf: Int32Array,
  rowPtr: Int32Array,
  rowCol: Int32Array,
  rowVal: Float64Array,
  rhs: Float64Array,
  fPtr: Int32Array,
  npiv: Int32Array,
  fcol: Int32Array,
  cOff: Float64Array,
  cLead: Int32Array,
  cLeadOff: Int32Array,
  cStack: Float64Array,
): void {
  for (let k = 0; k < nr; k++) {
    const t = rowOrder[k]
    const src = rowSrc[t]
    if (src < 0) {
      const i = rowSub[t]
      for (let q = rowPtr[i]; q < rowPtr[i + 1]; q++) F[loc[posOf[rowCol[q]]] * ld + k] += rowVal[q]
      F[nc * ld + k] = rhs[i]
    } else {
      const cf0 = fPtr[src] + npiv[src]
      const cw = fPtr[src + 1] - cf0 + 1
      const base = cOff[src] + rowSub[t] * cw
      for (let q = cLead[cLeadOff[src] + rowSub[t]]; q < cw - 1; q++) {
        const v = cStack[base + q]
        if (v !== 0) F[loc[fcol[cf0 + q]] * ld + k] = v
      }
      F[nc * ld + k] = cStack[base + cw - 1]
    }
  }
}

/** Rows 0..t−1 of the triangle (the pivot columns') are R's rows and Qᵀb. */
function storeR(F: Float64Array, ld: number, nc: number, t: number, lead: Int32Array, rv: Float64Array, off: number, qtb: Float64Array, pivStart: number): void {
  for (let q = 0; q < t; q++) {
    const j = lead[q]
    const rb = off + j * nc
    for (let jj = j; jj < nc; jj++) rv[rb + jj] = F[jj * ld + q]
    qtb[pivStart + j] = F[nc * ld + q]
  }
}

/** Rows t..t+cRows−1 of the triangle, without the pivot columns, onto the contribution stack. */
function saveContribution(
  F: Float64Array,
  ld: number,
  nc: number,
  np: number,
  t: number,
  cRows: number,
  lead: Int32Array,
  cStack: Float64Array,
  cTop: number,
  cLead: Int32Array,
  cLeadTop: number,
): void {
  const cw = nc - np + 1
  for (let q = 0; q < cRows; q++) {
    const j = lead[t + q]
    cLead[cLeadTop + q] = j - np
    const base = cTop + q * cw
    for (let jj = np; jj < j; jj++) cStack[base + jj - np] = 0
    for (let jj = j; jj < nc; jj++) cStack[base + jj - np] = F[jj * ld + t + q]
    cStack[base + cw - 1] = F[nc * ld + t + q]
  }
}

/**
 * Householder QR of one front in place (column-major, leading dimension ld,
 * nc columns + the right-hand side), rows sorted by lead column: `stair[j]` rows
 * can be non-zero in column j. Returns the number of rows of the triangle;
 * `lead[t]` is the column of its row t. Pivot columns (j < np) that are held or
 * dependent are skipped (no row, live stays 0). Kept apart from the assembly so
 * the JIT compiles small, monomorphic functions quickly.
 */
function triangularize(
  F: Float64Array,
  ld: number,
  nr: number,
  nc: number,
  np: number,
  stair: Int32Array,
  lead: Int32Array,
  pivStart: number,
  live: Uint8Array,
  held: Uint8Array | null,
  colAt: Int32Array,
  columnNorms: Float64Array,
  rankTolerance: number,
): number {
  const width = nc + 1
  let row = 0
  let end = 0
  for (let j = 0; j < nc && row < nr; j++) {
    if (stair[j] > end) end = stair[j]
    const cj = j * ld
    let xs = 0
    for (let i = row + 1; i < end; i++) xs += F[cj + i] * F[cj + i]
    const alpha = end > row ? F[cj + row] : 0
    if (j < np) {
      const p = pivStart + j
      if (held !== null && held[colAt[p]] === 1) continue // a free network's datum unknown: zero in the basic solution
      const norm = Math.sqrt(alpha * alpha + xs)
      if (!(norm > rankTolerance * columnNorms[colAt[p]])) continue // dependent
      live[p] = 1
    } else if (alpha === 0 && xs === 0) continue
    if (xs !== 0) {
      const beta = alpha > 0 ? -Math.sqrt(alpha * alpha + xs) : Math.sqrt(alpha * alpha + xs)
      const tau = (beta - alpha) / beta
      const scale = 1 / (alpha - beta)
      for (let i = row + 1; i < end; i++) F[cj + i] *= scale
      F[cj + row] = beta
      applyReflector(F, ld, cj, row, end, tau, j + 1, width)
      for (let i = row + 1; i < end; i++) F[cj + i] = 0
    }
    lead[row] = j
    row++
  }
  return row
}

/**
 * Columns from..width−1 ← (I − τ·v·vᵀ)·column on rows row..end−1, v = (1,
 * F[cj+row+1 .. cj+end−1]). Eight, then four columns per pass: the reflector
 * is read once for all of them.
 */
function applyReflector(F: Float64Array, ld: number, cj: number, row: number, end: number, tau: number, from: number, width: number): void {
  let jj = from
  for (; jj + 7 < width; jj += 8) {
    const c0 = jj * ld
    const c1 = c0 + ld
    const c2 = c1 + ld
    const c3 = c2 + ld
    const c4 = c3 + ld
    const c5 = c4 + ld
    const c6 = c5 + ld
    const c7 = c6 + ld
    let w0 = F[c0 + row]
    let w1 = F[c1 + row]
    let w2 = F[c2 + row]
    let w3 = F[c3 + row]
    let w4 = F[c4 + row]
    let w5 = F[c5 + row]
    let w6 = F[c6 + row]
    let w7 = F[c7 + row]
    for (let i = row + 1; i < end; i++) {
      const v = F[cj + i]
      w0 += v * F[c0 + i]
      w1 += v * F[c1 + i]
      w2 += v * F[c2 + i]
      w3 += v * F[c3 + i]
      w4 += v * F[c4 + i]
      w5 += v * F[c5 + i]
      w6 += v * F[c6 + i]
      w7 += v * F[c7 + i]
    }
    w0 *= tau
    w1 *= tau
    w2 *= tau
    w3 *= tau
    w4 *= tau
    w5 *= tau
    w6 *= tau
    w7 *= tau
    F[c0 + row] -= w0
    F[c1 + row] -= w1
    F[c2 + row] -= w2
    F[c3 + row] -= w3
    F[c4 + row] -= w4
    F[c5 + row] -= w5
    F[c6 + row] -= w6
    F[c7 + row] -= w7
    for (let i = row + 1; i < end; i++) {
      const v = F[cj + i]
      F[c0 + i] -= w0 * v
      F[c1 + i] -= w1 * v
      F[c2 + i] -= w2 * v
      F[c3 + i] -= w3 * v
      F[c4 + i] -= w4 * v
      F[c5 + i] -= w5 * v
      F[c6 + i] -= w6 * v
      F[c7 + i] -= w7 * v
    }
  }
  for (; jj + 3 < width; jj += 4) {
    const c0 = jj * ld
    const c1 = c0 + ld
    const c2 = c1 + ld
    const c3 = c2 + ld
    let w0 = F[c0 + row]
    let w1 = F[c1 + row]
    let w2 = F[c2 + row]
    let w3 = F[c3 + row]
    for (let i = row + 1; i < end; i++) {
      const v = F[cj + i]
      w0 += v * F[c0 + i]
      w1 += v * F[c1 + i]
      w2 += v * F[c2 + i]
      w3 += v * F[c3 + i]
    }
    if (w0 === 0 && w1 === 0 && w2 === 0 && w3 === 0) continue
    w0 *= tau
    w1 *= tau
    w2 *= tau
    w3 *= tau
    F[c0 + row] -= w0
    F[c1 + row] -= w1
    F[c2 + row] -= w2
    F[c3 + row] -= w3
    for (let i = row + 1; i < end; i++) {
      const v = F[cj + i]
      F[c0 + i] -= w0 * v
      F[c1 + i] -= w1 * v
      F[c2 + i] -= w2 * v
      F[c3 + i] -= w3 * v
    }
  }
  for (; jj < width; jj++) {
    const cc = jj * ld
    let w = F[cc + row]
    for (let i = row + 1; i < end; i++) w += F[cj + i] * F[cc + i]
    if (w === 0) continue
    w *= tau
    F[cc + row] -= w
    for (let i = row + 1; i < end; i++) F[cc + i] -= w * F[cj + i]
  }
}

/** Basic least-squares solution (caller's order): dependent unknowns zero. */
export function solveSparse(f: SparseFactor): Float64Array {
  const y = Float64Array.from(f.qtb)
  backward(f, y)
  const x = new Float64Array(f.u)
  for (let p = 0; p < f.u; p++) x[f.sym.colAt[p]] = y[p]
  return x
}

/** y ← R⁻¹y in place (positions; dependent positions come out zero). */
export function backward(f: SparseFactor, y: Float64Array): void {
  const { ns, pivStart, npiv, fPtr, fcol, rOff } = f.sym
  const { rv, live } = f
  for (let s = ns - 1; s >= 0; s--) {
    const nc = fPtr[s + 1] - fPtr[s]
    const f0 = fPtr[s]
    const np = npiv[s]
    const ps = pivStart[s]
    for (let j = np - 1; j >= 0; j--) {
      const p = ps + j
      if (!live[p]) {
        y[p] = 0
        continue
      }
      const rb = rOff[s] + j * nc
      let v = y[p]
      for (let jj = j + 1; jj < np; jj++) v -= rv[rb + jj] * y[ps + jj]
      for (let jj = np; jj < nc; jj++) v -= rv[rb + jj] * y[fcol[f0 + jj]]
      y[p] = v / rv[rb + j]
    }
  }
}

/** y ← R⁻ᵀy in place (positions; dependent positions zero). */
export function forward(f: SparseFactor, y: Float64Array): void {
  const { ns, pivStart, npiv, fPtr, fcol, rOff } = f.sym
  const { rv, live } = f
  for (let s = 0; s < ns; s++) {
    const nc = fPtr[s + 1] - fPtr[s]
    const f0 = fPtr[s]
    const np = npiv[s]
    const ps = pivStart[s]
    for (let j = 0; j < np; j++) {
      const p = ps + j
      if (!live[p]) {
        y[p] = 0
        continue
      }
      const rb = rOff[s] + j * nc
      const v = (y[p] /= rv[rb + j])
      if (v === 0) continue
      for (let jj = j + 1; jj < np; jj++) y[ps + jj] -= rv[rb + jj] * v
      for (let jj = np; jj < nc; jj++) y[fcol[f0 + jj]] -= rv[rb + jj] * v
    }
  }
}
