// Selected inverse Z = R⁻¹R⁻ᵀ = Qxx on the static supernodal pattern of the
// sparse R (./multifrontal): every entry (i, j) with R_ij in the pattern, which
// covers the unknowns of each observation (and so each station's block and every
// pair of stations joined by an observation), plus the diagonal.
//
// With J the pivot columns of a supernode and I the rest of its front,
// R·Z = R⁻ᵀ read on the rows J gives (Takahashi recurrences, block form)
//   Z_JI = −R_JJ⁻¹·R_JI·Z_II
//   Z_JJ =  R_JJ⁻¹·(R_JJ⁻ᵀ − R_JI·Z_IJ)
// and Z_II lies inside the parent's front (the pattern is closed under the
// recurrence), so supernodes are taken root first and each passes its full front
// of Z down to its children. Dependent columns get zero rows and columns (the
// basic solution's generalized inverse, as in the dense path); a free network's
// S-transformation is applied on top by the shared CofactorMatrix.
//
// Sources: Takahashi, K., Fagan, J. & Chin, M.-S. (1973) Formation of a sparse
// bus impedance matrix and its application to short circuit study, Proc. 8th PICA
// Conference, 63–69; Erisman, A.M. & Tinney, W.F. (1975) On computing certain
// elements of the inverse of a sparse matrix, Comm. ACM 18(3), 177–179;
// Amestoy, P.R., Duff, I.S., L'Excellent, J.-Y. & Rouet, F.-H. (2015) Parallel
// computation of entries of the inverse of a sparse matrix, SIAM J. Sci. Comput.
// 37(2), C268–C284 (the supernodal, root-first form) — all from memory.

import { CofactorMatrix, type DatumTransform } from '../cofactor'
import { backward, forward, type SparseFactor } from './multifrontal'

export class SparseCofactor extends CofactorMatrix {
  readonly f: SparseFactor
  /** Z on R's pattern, same layout as R */
  private z: Float64Array | null = null

  constructor(f: SparseFactor, datum: DatumTransform | null = null) {
    super(f.u, f.rank, datum)
    this.f = f
    this.initDatum()
  }

  /** The pattern of R already holds every observation's unknowns; the groups are checked on reading. */
  select(_groups?: Iterable<ArrayLike<number>>): void {
    if (!this.z) this.z = selectedInverse(this.f)
  }

  protected basicGet(i: number, j: number): number {
    const z = this.z
    if (!z) throw new Error('SparseCofactor.select() must run before get()')
    const { posOf, snOf, pivStart, npiv, fPtr, fcol, rOff } = this.f.sym
    let pi = posOf[i]
    let pj = posOf[j]
    if (!this.f.live[pi] || !this.f.live[pj]) return 0
    if (pi > pj) {
      const t = pi
      pi = pj
      pj = t
    }
    const s = snOf[pi]
    const nc = fPtr[s + 1] - fPtr[s]
    const np = npiv[s]
    const row = pi - pivStart[s]
    let col: number
    if (pj < pivStart[s] + np) col = pj - pivStart[s]
    else {
      // binary search among the front's other columns (ascending positions)
      let lo = fPtr[s] + np
      let hi = fPtr[s + 1] - 1
      col = -1
      while (lo <= hi) {
        const mid = (lo + hi) >> 1
        const v = fcol[mid]
        if (v === pj) {
          col = mid - fPtr[s]
          break
        }
        if (v < pj) lo = mid + 1
        else hi = mid - 1
      }
      if (col < 0) throw new Error(`cofactor entry (${i}, ${j}) is outside the pattern of R`)
    }
    return z[rOff[s] + row * nc + col]
  }

  protected basicColumns(js: ArrayLike<number>): Float64Array[] {
    const u = this.u
    return Array.from(js, (j) => {
      const e = new Float64Array(u)
      e[j] = 1
      return this.applyBasic(e)
    })
  }

  protected basicColumnsOf(vs: Float64Array[]): Float64Array[] {
    return vs.map((v) => this.applyBasic(v))
  }

  /** Qxx·v (caller's order) by Rᵀy = v, R·x = y. */
  private applyBasic(v: Float64Array): Float64Array {
    const { posOf, colAt } = this.f.sym
    const y = new Float64Array(this.u)
    for (let j = 0; j < this.u; j++) y[posOf[j]] = v[j]
    forward(this.f, y)
    backward(this.f, y)
    const out = new Float64Array(this.u)
    for (let p = 0; p < this.u; p++) out[colAt[p]] = y[p]
    return out
  }
}

/** Z = R⁻¹R⁻ᵀ on the supernodal pattern of R (layout of f.rv). */
export function selectedInverse(f: SparseFactor): Float64Array {
  const { ns, pivStart, npiv, fPtr, fcol, parent, rOff } = f.sym
  const { rv, live } = f
  const zv = new Float64Array(rv.length)
  // full fronts of Z on one stack: supernodes are taken root first, each subtree
  // at once, so the fronts a supernode needs are its ancestors', below it on the stack
  const hasChild = new Uint8Array(ns)
  for (let s = 0; s < ns; s++) if (parent[s] >= 0) hasChild[parent[s]] = 1
  let stack: Float64Array = new Float64Array(1 << 16)
  const stackSn: number[] = []
  const stackOff: number[] = []
  let top = 0
  const fullOff = new Float64Array(ns).fill(-1)
  let zii: Float64Array = new Float64Array(64)
  let t1: Float64Array = new Float64Array(64)
  let zji: Float64Array = new Float64Array(64)
  let zjj: Float64Array = new Float64Array(64)
  let rowJ: Float64Array = new Float64Array(64)
  let Jt: Int32Array = new Int32Array(64)
  const growInt = (a: Int32Array, n: number) => (a.length >= n ? a : new Int32Array(Math.max(n, 2 * a.length)))
  const grow = (a: Float64Array, n: number) => (a.length >= n ? a : new Float64Array(Math.max(n, 2 * a.length)))

  for (let s = ns - 1; s >= 0; s--) {
    const f0 = fPtr[s]
    const nc = fPtr[s + 1] - f0
    const np = npiv[s]
    const ni = nc - np
    const ps = pivStart[s]
    const off = rOff[s]
    // live pivot columns (local indices)
    const J: number[] = []
    for (let j = 0; j < np; j++) if (live[ps + j]) J.push(j)
    const nl = J.length
    // Z_II from the parent's full front
    zii = grow(zii, ni * ni)
    const p = parent[s]
    // drop the fronts of finished subtrees: keep only s's ancestors
    while (stackSn.length && stackSn[stackSn.length - 1] !== p) {
      stackSn.pop()
      top = stackOff.pop()!
    }
    if (ni > 0) {
      const zp = stack
      const zpOff = fullOff[p]
      const pf0 = fPtr[p]
      const pnc = fPtr[p + 1] - pf0
      const rel = new Int32Array(ni)
      let q = 0
      for (let a = 0; a < ni; a++) {
        const pos = fcol[f0 + np + a]
        while (fcol[pf0 + q] !== pos) q++
        rel[a] = q
      }
      gather(zp, zpOff, pnc, rel, ni, zii)
    }
    // T = R_JI · Z_II (nl × ni), then Z_JI and Z_JJ
    t1 = grow(t1, nl * ni)
    zji = grow(zji, nl * ni)
    zjj = grow(zjj, nl * nl)
    rowJ = grow(rowJ, nl)
    Jt = growInt(Jt, nl)
    for (let t = 0; t < nl; t++) Jt[t] = J[t]
    productRZ(rv, off, nc, np, Jt, nl, ni, zii, t1)
    solveZji(rv, off, nc, Jt, nl, ni, t1, zji)
    solveZjj(rv, off, nc, np, Jt, nl, ni, zji, zjj, rowJ)
    // store on R's layout
    storeRows(zv, off, nc, np, Jt, nl, ni, zjj, zji)
    if (hasChild[s]) {
      if (top + nc * nc > stack.length) {
        const grown = new Float64Array(Math.max(top + nc * nc, 2 * stack.length))
        grown.set(stack.subarray(0, top))
        stack = grown
      }
      const fz = stack.subarray(top, top + nc * nc)
      fz.fill(0)
      fullOff[s] = top
      stackSn.push(s)
      stackOff.push(top)
      top += nc * nc
      storeFront(fz, nc, np, Jt, nl, ni, zjj, zji, zii)
    }
  }
  return zv
}

/**
 * T = R_JI·Z_II (nl × ni). Z_II is symmetric, so T_tb = R_J[t],I · Z_II[b,:]:
 * dot products of contiguous rows, four rows of R_JI at a time (each row of
 * Z_II read once for all four). Small separate kernels compile quickly.
 */
function productRZ(rv: Float64Array, off: number, nc: number, np: number, J: Int32Array, nl: number, ni: number, zii: Float64Array, t1: Float64Array): void {
  let t = 0
  for (; t + 3 < nl; t += 4) {
    const r0 = off + J[t] * nc + np
    const r1 = off + J[t + 1] * nc + np
    const r2 = off + J[t + 2] * nc + np
    const r3 = off + J[t + 3] * nc + np
    const b0 = t * ni
    for (let b = 0; b < ni; b++) {
      const zb = b * ni
      let s0 = 0
      let s1 = 0
      let s2 = 0
      let s3 = 0
      for (let a = 0; a < ni; a++) {
        const z = zii[zb + a]
        s0 += rv[r0 + a] * z
        s1 += rv[r1 + a] * z
        s2 += rv[r2 + a] * z
        s3 += rv[r3 + a] * z
      }
      t1[b0 + b] = s0
      t1[b0 + ni + b] = s1
      t1[b0 + 2 * ni + b] = s2
      t1[b0 + 3 * ni + b] = s3
    }
  }
  for (; t < nl; t++) {
    const rb = off + J[t] * nc + np
    const tb = t * ni
    for (let b = 0; b < ni; b++) {
      const zb = b * ni
      let s0 = 0
      for (let a = 0; a < ni; a++) s0 += rv[rb + a] * zii[zb + a]
      t1[tb + b] = s0
    }
  }
}

/** Z_JI = −R_JJ⁻¹·T, rows from the last. */
function solveZji(rv: Float64Array, off: number, nc: number, J: Int32Array, nl: number, ni: number, t1: Float64Array, zji: Float64Array): void {
  for (let t = nl - 1; t >= 0; t--) {
    const rb = off + J[t] * nc
    const tb = t * ni
    for (let b = 0; b < ni; b++) zji[tb + b] = -t1[tb + b]
    for (let t2 = t + 1; t2 < nl; t2++) {
      const r = rv[rb + J[t2]]
      if (r === 0) continue
      const ob = t2 * ni
      for (let b = 0; b < ni; b++) zji[tb + b] -= r * zji[ob + b]
    }
    const d = rv[rb + J[t]]
    for (let b = 0; b < ni; b++) zji[tb + b] /= d
  }
}

/**
 * Z_JJ = R_JJ⁻¹·(R_JJ⁻ᵀ − R_JI·Z_JIᵀ), by rows from the last (symmetric). Row t
 * of R_JJ is gathered once; Z[l][t2] is read as Z[t2][l] along a contiguous row
 * (rows below t are complete).
 */
function solveZjj(rv: Float64Array, off: number, nc: number, np: number, J: Int32Array, nl: number, ni: number, zji: Float64Array, zjj: Float64Array, rowJ: Float64Array): void {
  for (let t = nl - 1; t >= 0; t--) {
    const rb = off + J[t] * nc
    const d = rv[rb + J[t]]
    for (let l = t + 1; l < nl; l++) rowJ[l] = rv[rb + J[l]]
    for (let t2 = nl - 1; t2 >= t; t2--) {
      // W_t,t2 = R_J[t],I · Z_J[t2],I
      let v = t === t2 ? 1 / d : 0
      const ob = t2 * ni
      for (let a = 0; a < ni; a++) v -= rv[rb + np + a] * zji[ob + a]
      const zr = t2 * nl
      for (let l = t + 1; l < nl; l++) v -= rowJ[l] * zjj[zr + l]
      v /= d
      zjj[t * nl + t2] = v
      zjj[zr + t] = v
    }
  }
}

/** Z_II (ni × ni) out of the parent's full front of Z, at the parent's columns `rel`. */
function gather(zp: Float64Array, zpOff: number, pnc: number, rel: Int32Array, ni: number, zii: Float64Array): void {
  for (let a = 0; a < ni; a++) {
    const ra = zpOff + rel[a] * pnc
    for (let b = 0; b < ni; b++) zii[a * ni + b] = zp[ra + rel[b]]
  }
}

/** Rows J of Z (Z_JJ and Z_JI) into R's layout. */
function storeRows(zv: Float64Array, off: number, nc: number, np: number, J: Int32Array, nl: number, ni: number, zjj: Float64Array, zji: Float64Array): void {
  for (let t = 0; t < nl; t++) {
    const zb = off + J[t] * nc
    for (let t2 = 0; t2 < nl; t2++) zv[zb + J[t2]] = zjj[t * nl + t2]
    for (let a = 0; a < ni; a++) zv[zb + np + a] = zji[t * ni + a]
  }
}

/** The supernode's full front of Z (nc × nc) for its children. */
function storeFront(fz: Float64Array, nc: number, np: number, J: Int32Array, nl: number, ni: number, zjj: Float64Array, zji: Float64Array, zii: Float64Array): void {
  for (let t = 0; t < nl; t++) {
    const jt = J[t]
    for (let t2 = 0; t2 < nl; t2++) fz[jt * nc + J[t2]] = zjj[t * nl + t2]
    for (let a = 0; a < ni; a++) {
      const v = zji[t * ni + a]
      fz[jt * nc + np + a] = v
      fz[(np + a) * nc + jt] = v
    }
  }
  for (let a = 0; a < ni; a++) for (let b = 0; b < ni; b++) fz[(np + a) * nc + np + b] = zii[a * ni + b]
}
