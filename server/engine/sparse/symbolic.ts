// Symbolic analysis of the sparse least-squares problem min ‖A·x − b‖ on blocks
// of unknowns (a station's coordinates with the orientations of its direction
// sets; a height): fill-reducing order of the block graph (./ordering), the
// elimination tree of AᵀA from A's rows without forming AᵀA, its postorder, the
// static pattern of R block row by block row, column counts, fundamental
// supernodes and the scalar layout of every frontal matrix.
//
// R's pattern is that of the Cholesky factor of AᵀA (George & Heath 1980): row k
// of R holds the unknowns of every observation whose first unknown is k and the
// pattern of each child in the elimination tree less the child itself.
//
// Sources: Liu, J.W.H. (1990) The role of elimination trees in sparse
// factorization, SIAM J. Matrix Anal. Appl. 11(1), 134–172 (elimination tree by
// path compression; for AᵀA each row links its columns in turn, as in
// Davis, T.A. (2006) Direct Methods for Sparse Linear Systems, SIAM, §4.1 "cs_etree"
// with ata); George, A. & Heath, M.T. (1980) Solution of sparse linear least
// squares problems using Givens rotations, Linear Algebra Appl. 34, 69–83 (static
// structure of R); Ashcraft, C. & Grimes, R. (1989) The influence of relaxed
// supernode partitions on the multifrontal method, ACM TOMS 15(4), 291–309
// (fundamental supernodes) — all from memory.

import { graphFromGroups, nestedDissection } from './ordering'

export interface SparseRows {
  /** rows of the whitened design: columns rowCol[rowPtr[i] .. rowPtr[i+1]) with values rowVal */
  m: number
  rowPtr: Int32Array
  rowCol: Int32Array
  rowVal: Float64Array
  rhs: Float64Array
}

export interface Symbolic {
  u: number
  /** scalar position (elimination order) of each caller's unknown, and back */
  posOf: Int32Array
  colAt: Int32Array
  /** supernodes in postorder: pivot positions pivStart[s] .. pivStart[s]+npiv[s] */
  ns: number
  pivStart: Int32Array
  npiv: Int32Array
  /** front columns (positions, ascending: pivots then the rest) fcol[fPtr[s] .. fPtr[s+1]) */
  fPtr: Int32Array
  fcol: Int32Array
  parent: Int32Array
  /** supernode owning each position */
  snOf: Int32Array
  /** rows (caller's row index) whose first position lies in the supernode */
  rPtr: Int32Array
  rIdx: Int32Array
  /** offset of each supernode's npiv × ncols block of R (and of the selected inverse) */
  rOff: Float64Array
  rSize: number
  /** entries of R's static pattern counted per column (scalar), upper part */
  colCount: Int32Array
}

/**
 * @param blockIds block of each caller's unknown (unknowns of one block are kept together)
 */
export function analyse(rows: SparseRows, u: number, blockIds: ArrayLike<number>): Symbolic {
  // blocks renumbered densely (a caller's block id may have no unknowns)
  const blockOf = new Int32Array(u)
  let nb = 0
  {
    const seen = new Map<number, number>()
    for (let j = 0; j < u; j++) {
      let b = seen.get(blockIds[j])
      if (b === undefined) seen.set(blockIds[j], (b = nb++))
      blockOf[j] = b
    }
  }
  // distinct blocks of each row
  const m = rows.m
  const gPtr = new Int32Array(m + 1)
  const gTmp = new Int32Array(rows.rowCol.length)
  const stamp = new Int32Array(nb).fill(-1)
  let o = 0
  for (let i = 0; i < m; i++) {
    for (let t = rows.rowPtr[i]; t < rows.rowPtr[i + 1]; t++) {
      const b = blockOf[rows.rowCol[t]]
      if (stamp[b] !== i) {
        stamp[b] = i
        gTmp[o++] = b
      }
    }
    gPtr[i + 1] = o
  }
  const gIdx = gTmp.subarray(0, o)

  // 1. ordering of the block graph
  const order = nestedDissection(graphFromGroups(nb, gPtr, gIdx))
  let bpos = new Int32Array(nb)
  for (let k = 0; k < nb; k++) bpos[order[k]] = k

  // rows of each block column (CSC on block positions)
  const cPtr = new Int32Array(nb + 1)
  for (let t = 0; t < gIdx.length; t++) cPtr[bpos[gIdx[t]] + 1]++
  for (let k = 0; k < nb; k++) cPtr[k + 1] += cPtr[k]
  const cIdx = new Int32Array(gIdx.length)
  {
    const fill = cPtr.slice(0, nb)
    for (let i = 0; i < m; i++) for (let t = gPtr[i]; t < gPtr[i + 1]; t++) cIdx[fill[bpos[gIdx[t]]]++] = i
  }

  // 2. elimination tree of AᵀA from the rows (Liu's path compression, each row
  // linking the columns it meets in turn)
  const parentB = new Int32Array(nb).fill(-1)
  {
    const ancestor = new Int32Array(nb).fill(-1)
    const prev = new Int32Array(m).fill(-1)
    for (let k = 0; k < nb; k++) {
      for (let t = cPtr[k]; t < cPtr[k + 1]; t++) {
        const row = cIdx[t]
        let i = prev[row]
        while (i !== -1 && i < k) {
          const next = ancestor[i]
          ancestor[i] = k
          if (next === -1) parentB[i] = k
          i = next
        }
        prev[row] = k
      }
    }
  }

  // postorder (children before parents, subtrees contiguous): same fill, and
  // supernodes become ranges
  const post = postorder(parentB, nb)
  const renum = new Int32Array(nb)
  for (let k = 0; k < nb; k++) renum[post[k]] = k
  const parent = new Int32Array(nb).fill(-1)
  for (let k = 0; k < nb; k++) if (parentB[k] >= 0) parent[renum[k]] = renum[parentB[k]]
  const bpos2 = new Int32Array(nb)
  for (let b = 0; b < nb; b++) bpos2[b] = renum[bpos[b]]
  bpos = bpos2

  // 3. pattern of each block row of R: own rows' blocks ∪ children's patterns
  const firstOfRow = new Int32Array(m)
  const rowsAt = new Int32Array(nb + 1)
  for (let i = 0; i < m; i++) {
    let f = nb
    for (let t = gPtr[i]; t < gPtr[i + 1]; t++) if (bpos[gIdx[t]] < f) f = bpos[gIdx[t]]
    firstOfRow[i] = f
    if (f < nb) rowsAt[f + 1]++
  }
  for (let k = 0; k < nb; k++) rowsAt[k + 1] += rowsAt[k]
  const rowsList = new Int32Array(rowsAt[nb])
  {
    const fill = rowsAt.slice(0, nb)
    for (let i = 0; i < m; i++) if (firstOfRow[i] < nb) rowsList[fill[firstOfRow[i]]++] = i
  }
  const childPtr = new Int32Array(nb + 1)
  for (let k = 0; k < nb; k++) if (parent[k] >= 0) childPtr[parent[k] + 1]++
  for (let k = 0; k < nb; k++) childPtr[k + 1] += childPtr[k]
  const childIdx = new Int32Array(childPtr[nb])
  {
    const fill = childPtr.slice(0, nb)
    for (let k = 0; k < nb; k++) if (parent[k] >= 0) childIdx[fill[parent[k]]++] = k
  }
  const pat: Int32Array[] = new Array(nb)
  const mark = new Int32Array(nb).fill(-1)
  const buf = new Int32Array(nb)
  for (let k = 0; k < nb; k++) {
    let cnt = 0
    mark[k] = k
    buf[cnt++] = k
    for (let t = rowsAt[k]; t < rowsAt[k + 1]; t++) {
      const i = rowsList[t]
      for (let q = gPtr[i]; q < gPtr[i + 1]; q++) {
        const b = bpos[gIdx[q]]
        if (mark[b] !== k) {
          mark[b] = k
          buf[cnt++] = b
        }
      }
    }
    for (let t = childPtr[k]; t < childPtr[k + 1]; t++) {
      const c = pat[childIdx[t]]
      for (let q = 1; q < c.length; q++) {
        const b = c[q]
        if (mark[b] !== k) {
          mark[b] = k
          buf[cnt++] = b
        }
      }
    }
    pat[k] = buf.slice(0, cnt).sort()
  }

  // scalar positions: blocks in order, each block's unknowns together
  const bSize = new Int32Array(nb)
  for (let j = 0; j < u; j++) bSize[bpos[blockOf[j]]]++
  const bStart = new Int32Array(nb + 1)
  for (let k = 0; k < nb; k++) bStart[k + 1] = bStart[k] + bSize[k]
  const posOf = new Int32Array(u)
  const colAt = new Int32Array(u)
  {
    const fill = bStart.slice(0, nb)
    for (let j = 0; j < u; j++) {
      const p = fill[bpos[blockOf[j]]]++
      posOf[j] = p
      colAt[p] = j
    }
  }

  // 4. fundamental supernodes: a block joins its only child's supernode when the
  // child's pattern is the block and its own pattern
  const snOfBlock = new Int32Array(nb)
  const snFirst: number[] = []
  for (let k = 0; k < nb; k++) {
    const c = k - 1
    const joins =
      k > 0 && parent[c] === k && childPtr[k + 1] - childPtr[k] === 1 && pat[c].length === pat[k].length + 1
    if (!joins) snFirst.push(k)
    snOfBlock[k] = snFirst.length - 1
  }
  const ns = snFirst.length
  snFirst.push(nb)
  const pivStart = new Int32Array(ns)
  const npiv = new Int32Array(ns)
  const fPtr = new Int32Array(ns + 1)
  const snParent = new Int32Array(ns).fill(-1)
  for (let s = 0; s < ns; s++) {
    const b0 = snFirst[s]
    const b1 = snFirst[s + 1] - 1
    pivStart[s] = bStart[b0]
    npiv[s] = bStart[b1 + 1] - bStart[b0]
    let extra = 0
    const p = pat[b1]
    for (let q = 1; q < p.length; q++) extra += bSize[p[q]]
    fPtr[s + 1] = fPtr[s] + npiv[s] + extra
    if (parent[b1] >= 0) snParent[s] = snOfBlock[parent[b1]]
  }
  const fcol = new Int32Array(fPtr[ns])
  const colCount = new Int32Array(u)
  const rOff = new Float64Array(ns + 1)
  for (let s = 0; s < ns; s++) {
    let w = fPtr[s]
    for (let p = pivStart[s]; p < pivStart[s] + npiv[s]; p++) fcol[w++] = p
    const p = pat[snFirst[s + 1] - 1]
    for (let q = 1; q < p.length; q++) for (let c = bStart[p[q]]; c < bStart[p[q] + 1]; c++) fcol[w++] = c
    const nc = fPtr[s + 1] - fPtr[s]
    rOff[s + 1] = rOff[s] + npiv[s] * nc
    for (let t = 0; t < npiv[s]; t++) colCount[pivStart[s] + t] = nc - t
  }
  const snOf = new Int32Array(u)
  for (let s = 0; s < ns; s++) for (let p = pivStart[s]; p < pivStart[s] + npiv[s]; p++) snOf[p] = s
  // observations by the supernode of their first unknown
  const rPtr = new Int32Array(ns + 1)
  for (let i = 0; i < m; i++) if (firstOfRow[i] < nb) rPtr[snOfBlock[firstOfRow[i]] + 1]++
  for (let s = 0; s < ns; s++) rPtr[s + 1] += rPtr[s]
  const rIdx = new Int32Array(rPtr[ns])
  {
    const fill = rPtr.slice(0, ns)
    for (let i = 0; i < m; i++) if (firstOfRow[i] < nb) rIdx[fill[snOfBlock[firstOfRow[i]]]++] = i
  }
  return {
    u,
    posOf,
    colAt,
    ns,
    pivStart,
    npiv,
    fPtr,
    fcol,
    parent: snParent,
    snOf,
    rPtr,
    rIdx,
    rOff,
    rSize: rOff[ns],
    colCount,
  }
}

function postorder(parent: Int32Array, n: number): Int32Array {
  const head = new Int32Array(n).fill(-1)
  const next = new Int32Array(n).fill(-1)
  for (let k = n - 1; k >= 0; k--) {
    const p = parent[k]
    if (p >= 0) {
      next[k] = head[p]
      head[p] = k
    }
  }
  const post = new Int32Array(n)
  const stack = new Int32Array(n)
  let cnt = 0
  for (let root = 0; root < n; root++) {
    if (parent[root] !== -1) continue
    let top = 0
    stack[top++] = root
    while (top > 0) {
      const v = stack[top - 1]
      const c = head[v]
      if (c === -1) {
        top--
        post[cnt++] = v
      } else {
        head[v] = next[c]
        stack[top++] = c
      }
    }
  }
  return post
}
