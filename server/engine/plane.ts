// The plane network: unknowns E, N of every new (or weighted) station and one
// orientation ω per direction set, ordered station by station in Cuthill–McKee
// order (each set's ω next to its station) to keep the factor banded. Each row's
// equation and partial derivatives come from its kind's model (./models). Free
// networks: the null space (two translations, the rotation — which turns every
// orientation with it — and the scale) for the inner constraints.

import { angleEquation } from './models/angle'
import { azimuthEquation } from './models/azimuth'
import { directionEquation } from './models/direction'
import { distanceEquation } from './models/horizontal-distance'
import { linearizedInto, pushTerm, type Linearized, type PlanePoint } from './models/types'
import { wrapPi } from './geometry'
import type { XY } from './approx'
import type { LinearRow, NonlinearProblem } from './lsq'
import type { SparseRows } from './sparse/symbolic'
import type { ControlRecord } from './types'

/** Convergence: 0.01 mm on coordinates, and the angle that subtends 0.01 mm at 1 km. */
export const TOL_LENGTH = 1e-5
export const TOL_ANGLE = 1e-8

export type PlaneDef =
  | { type: 'direction'; at: number; to: number; set: number }
  | { type: 'angle'; at: number; from: number; to: number }
  | { type: 'distance'; at: number; to: number }
  | { type: 'azimuth'; at: number; to: number }
  | { type: 'coord'; st: number; comp: 0 | 1 }

export interface PlaneRow {
  def: PlaneDef
  /** index of the observation's result */
  out: number
  /** observed value reduced to the grid (m or rad) */
  value: number
  sigma: number
  /** model residual (m or rad) → output residual (m of the observation, or arcsec) */
  outScale: number
}

export function buildPlaneProblem(
  names: string[],
  control: (ControlRecord | null)[],
  coords: XY[],
  orientation: Float64Array,
  rows: PlaneRow[],
  setStation: string[],
  setLabel: string[],
  free: boolean,
) {
  const nS = names.length
  const nSets = orientation.length
  const order = cuthillMcKee(nS, rows.flatMap(({ def }) => (def.type === 'coord' ? [] : def.type === 'angle' ? [[def.at, def.to], [def.at, def.from]] : [[def.at, def.to]])))
  const stationCols = names.map(() => Int32Array.from([-1, -1]))
  const labels: string[] = []
  const setCol = new Int32Array(nSets)
  const setsAt = names.map(() => [] as number[])
  const nameIdx = new Map(names.map((s, k) => [s, k]))
  for (let s = 0; s < nSets; s++) setsAt[nameIdx.get(setStation[s])!].push(s)
  let u = 0
  for (const k of order) {
    for (const s of setsAt[k]) {
      setCol[s] = u++
      labels.push(`orientation of direction set ${setLabel[s] ? `'${setLabel[s]}' ` : ''}at station ${setStation[s]}`)
    }
    const c = control[k]
    if (free || !c || c.sdEast !== null) {
      stationCols[k][0] = u++
      labels.push(`station ${names[k]} (east)`)
    }
    if (free || !c || c.sdNorth !== null) {
      stationCols[k][1] = u++
      labels.push(`station ${names[k]} (north)`)
    }
  }
  const x0 = new Float64Array(u)
  const tolerance = new Float64Array(u)
  for (let s = 0; s < nSets; s++) {
    x0[setCol[s]] = orientation[s]
    tolerance[setCol[s]] = TOL_ANGLE
  }
  for (let k = 0; k < nS; k++) {
    const [ce, cn] = stationCols[k]
    if (ce >= 0) {
      x0[ce] = coords[k].e
      tolerance[ce] = TOL_LENGTH
    }
    if (cn >= 0) {
      x0[cn] = coords[k].n
      tolerance[cn] = TOL_LENGTH
    }
  }
  const point = (x: Float64Array, k: number, into?: PlanePoint): PlanePoint => {
    const [ce, cn] = stationCols[k]
    const e = ce >= 0 ? x[ce] : coords[k].e
    const n = cn >= 0 ? x[cn] : coords[k].n
    if (!into) return { e, n, ce, cn }
    into.e = e
    into.n = n
    into.ce = ce
    into.cn = cn
    return into
  }

  // scratch points for the rows' stations: linearizing allocates nothing per row
  const pa: PlanePoint = { e: 0, n: 0, ce: -1, cn: -1 }
  const pb: PlanePoint = { e: 0, n: 0, ce: -1, cn: -1 }
  const pc: PlanePoint = { e: 0, n: 0, ce: -1, cn: -1 }
  /** row i at x into `lin` (its model's equation); returns the misclosure observed − computed */
  const linearizeRow = (x: Float64Array, i: number, lin: Linearized): number => {
    const { def, value } = rows[i]
    let angular = true
    switch (def.type) {
      case 'direction':
        directionEquation(point(x, def.at, pa), point(x, def.to, pb), x[setCol[def.set]], setCol[def.set], lin)
        break
      case 'azimuth':
        azimuthEquation(point(x, def.at, pa), point(x, def.to, pb), lin)
        break
      case 'angle':
        angleEquation(point(x, def.at, pa), point(x, def.from, pb), point(x, def.to, pc), lin)
        break
      case 'distance':
        distanceEquation(point(x, def.at, pa), point(x, def.to, pb), lin)
        angular = false
        break
      case 'coord': {
        const p = point(x, def.st, pa)
        linearizedInto(lin)
        lin.computed = def.comp === 0 ? p.e : p.n
        pushTerm(lin, def.comp === 0 ? p.ce : p.cn, 1)
        angular = false
        break
      }
    }
    return angular ? wrapPi(value - lin.computed) : value - lin.computed
  }

  const linearize = (x: Float64Array): LinearRow[] =>
    rows.map(({ sigma }, i) => {
      const lin: Linearized = { computed: 0, cols: [], coef: [] }
      const misclosure = linearizeRow(x, i, lin)
      return { cols: lin.cols, coef: lin.coef, misclosure, sigma, computed: lin.computed }
    })

  // the same rows whitened into typed arrays; the pattern is fixed by the stations' columns
  const scratch: Linearized = { computed: 0, cols: [], coef: [], size: 0 }
  const linearizeWhitened = (x: Float64Array, reuse: SparseRows | null): SparseRows => {
    const m = rows.length
    let out = reuse
    if (!out) {
      const rowPtr = new Int32Array(m + 1)
      const cols: number[] = []
      for (let i = 0; i < m; i++) {
        linearizeRow(x, i, scratch)
        for (let c = 0; c < scratch.size!; c++) cols.push(scratch.cols[c])
        rowPtr[i + 1] = cols.length
      }
      out = { m, rowPtr, rowCol: Int32Array.from(cols), rowVal: new Float64Array(cols.length), rhs: new Float64Array(m) }
    }
    const { rowPtr, rowVal, rhs } = out
    for (let i = 0; i < m; i++) {
      const misclosure = linearizeRow(x, i, scratch)
      const w = 1 / rows[i].sigma
      const coef = scratch.coef
      const size = scratch.size!
      if (size !== rowPtr[i + 1] - rowPtr[i]) throw new Error(`row ${i}: its pattern changed between iterations`)
      let o = rowPtr[i]
      for (let c = 0; c < size; c++, o++) rowVal[o] = coef[c] * w
      rhs[i] = misclosure * w
    }
    return out
  }

  const nullSpace = free
    ? (x: Float64Array) => {
        let ce = 0
        let cn = 0
        for (let k = 0; k < nS; k++) {
          const p = point(x, k)
          ce += p.e / nS
          cn += p.n / nS
        }
        const g = [new Float64Array(u), new Float64Array(u), new Float64Array(u), new Float64Array(u)]
        const weights = new Float64Array(u)
        for (let k = 0; k < nS; k++) {
          const [ie, in_] = stationCols[k]
          const p = point(x, k)
          const e = p.e - ce
          const n = p.n - cn
          g[0][ie] = 1
          g[1][in_] = 1
          // rotation by a small angle: azimuths and all orientations grow by it
          g[2][ie] = n
          g[2][in_] = -e
          g[3][ie] = e
          g[3][in_] = n
          weights[ie] = weights[in_] = 1
        }
        for (let s = 0; s < nSets; s++) g[2][setCol[s]] = 1
        return { g, weights }
      }
    : undefined

  // the statistics read each station's block and the blocks between connected stations
  const cofactorGroups = () => {
    const own = (k: number) => [...stationCols[k]].filter((c) => c >= 0)
    const groups = names.map((_, k) => own(k))
    for (const { def } of rows) {
      if (def.type === 'coord') continue
      groups.push([...own(def.at), ...own(def.to)])
      if (def.type === 'angle') groups.push([...own(def.at), ...own(def.from)])
    }
    return groups
  }

  // sparse factorization: a station's coordinates and its sets' orientations form one block
  const blocks = new Int32Array(u)
  for (let s = 0; s < nSets; s++) blocks[setCol[s]] = nameIdx.get(setStation[s])!
  stationCols.forEach((sc, k) => sc.forEach((j) => j >= 0 && (blocks[j] = k)))

  return {
    problem: { u, labels, tolerance, x0, linearize, linearizeWhitened, nullSpace, cofactorGroups, blocks } satisfies NonlinearProblem,
    rowOut: rows.map((r) => r.out),
    rowScale: rows.map((r) => r.outScale),
    stationCols,
  }
}

/**
 * Cuthill–McKee ordering of the station graph (bandwidth reduction, less fill in
 * QR): components from their lowest-degree station, breadth first, neighbours by
 * degree then index. Adjacency in typed arrays (a large network has 10⁵ edges).
 */
export function cuthillMcKee(n: number, edges: number[][]): number[] {
  // distinct neighbours: CSR from both directions, then deduplicated per station
  const deg0 = new Int32Array(n + 1)
  for (const [a, b] of edges) {
    if (a === b) continue
    deg0[a + 1]++
    deg0[b + 1]++
  }
  for (let i = 0; i < n; i++) deg0[i + 1] += deg0[i]
  const raw = new Int32Array(deg0[n])
  const fill = deg0.slice(0, n)
  for (const [a, b] of edges) {
    if (a === b) continue
    raw[fill[a]++] = b
    raw[fill[b]++] = a
  }
  const ptr = new Int32Array(n + 1)
  const adj = new Int32Array(raw.length)
  const mark = new Int32Array(n).fill(-1)
  let o = 0
  for (let v = 0; v < n; v++) {
    for (let t = deg0[v]; t < deg0[v + 1]; t++) {
      const w = raw[t]
      if (mark[w] === v) continue
      mark[w] = v
      adj[o++] = w
    }
    ptr[v + 1] = o
  }
  const degree = (v: number) => ptr[v + 1] - ptr[v]
  const byDegreeThenIndex = (a: number, b: number) => degree(a) - degree(b) || a - b
  const seen = new Uint8Array(n)
  const order: number[] = []
  const byDegree = Array.from({ length: n }, (_, i) => i).sort(byDegreeThenIndex)
  const next: number[] = []
  for (const start of byDegree) {
    if (seen[start]) continue
    seen[start] = 1
    const queue = [start]
    for (let h = 0; h < queue.length; h++) {
      const v = queue[h]
      order.push(v)
      next.length = 0
      for (let t = ptr[v]; t < ptr[v + 1]; t++) if (!seen[adj[t]]) next.push(adj[t])
      next.sort(byDegreeThenIndex)
      for (const w of next) {
        seen[w] = 1
        queue.push(w)
      }
    }
  }
  return order
}
