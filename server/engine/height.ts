// The height network (1D): unknowns H of every new (or weighted) station; rows
// are levelled and trigonometric height differences (the equation of
// ./models/height-difference) and weighted benchmark heights. Free networks: one
// translation in the null space.

import { heightDifferenceEquation } from './models/height-difference'
import { cuthillMcKee, TOL_LENGTH } from './plane'
import type { LinearRow, NonlinearProblem } from './lsq'
import type { ControlRecord } from './types'

export interface HeightRow {
  out: number
  at: number
  to: number
  /** observed height difference (or height for coord rows: at = to = station) */
  value: number
  coord: boolean
  sigma: number
  outScale: number
}

export function buildHeightProblem(
  names: string[],
  control: (ControlRecord | null)[],
  heights: number[],
  rows: HeightRow[],
  free: boolean,
) {
  const nS = names.length
  const order = cuthillMcKee(nS, rows.filter((r) => !r.coord).map((r) => [r.at, r.to]))
  const stationCols = names.map(() => Int32Array.from([-1]))
  const labels: string[] = []
  let u = 0
  for (const k of order) {
    const c = control[k]
    if (free || !c || c.sdHeight !== null) {
      stationCols[k][0] = u++
      labels.push(`station ${names[k]} (height)`)
    }
  }
  const x0 = new Float64Array(u)
  const tolerance = new Float64Array(u).fill(TOL_LENGTH)
  for (let k = 0; k < nS; k++) if (stationCols[k][0] >= 0) x0[stationCols[k][0]] = heights[k]
  const H = (x: Float64Array, k: number) => (stationCols[k][0] >= 0 ? x[stationCols[k][0]] : heights[k])
  const linearize = (x: Float64Array): LinearRow[] =>
    rows.map((r) => {
      if (r.coord) {
        const c = stationCols[r.at][0]
        const computed = H(x, r.at)
        return { cols: c >= 0 ? [c] : [], coef: c >= 0 ? [1] : [], misclosure: r.value - computed, sigma: r.sigma, computed }
      }
      const lin = heightDifferenceEquation(H(x, r.at), H(x, r.to), stationCols[r.at][0], stationCols[r.to][0])
      return { cols: lin.cols, coef: lin.coef, misclosure: r.value - lin.computed, sigma: r.sigma, computed: lin.computed }
    })
  const nullSpace = free
    ? () => {
        const g = new Float64Array(u).fill(1)
        return { g: [g], weights: new Float64Array(u).fill(1) }
      }
    : undefined
  return {
    problem: { u, labels, tolerance, x0, linearize, nullSpace } satisfies NonlinearProblem,
    rowOut: rows.map((r) => r.out),
    rowScale: rows.map((r) => r.outScale),
    stationCols,
  }
}
