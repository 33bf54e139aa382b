// What every observation kind implements (one file per kind in this folder,
// listed in ./registry). A kind adds: its checks, the stations it touches, its
// a-priori σ from the instrument profile and the approximate geometry, and —
// for the kinds that enter the plane or height network directly — its
// linearized observation equation with partial derivatives.

import type { InstrumentProfile, ObservationRecord } from '../types'

export interface ModelIssue {
  column: string
  message: string
}

/** Geometry known before the adjustment: horizontal lengths between stations (m), null when unknown. */
export interface SigmaContext {
  profile: InstrumentProfile
  length(a: string, b: string): number | null
}

/** A station's position in the plane and the columns of its unknowns (−1 = held). */
export interface PlanePoint {
  e: number
  n: number
  ce: number
  cn: number
}

/** One linearized row: computed value at the linearization point and ∂f/∂x by column. */
export interface Linearized {
  computed: number
  cols: number[]
  coef: number[]
  /**
   * a reused scratch row (linearizedInto) counts its terms here instead of
   * emptying the arrays: the first `size` entries of cols and coef are the row
   * (emptying a JS array drops its storage, so every push would allocate again)
   */
  size?: number
}

export interface ObservationModel<K extends string = string> {
  kind: K
  /** words a person reads, e.g. in a select */
  label: string
  /** the value is an angle (radians) or a length (metres) */
  quantity: 'angle' | 'length'
  /** the network the kind enters: plane (E, N), height (H), both through its partner row, or only the 3D adjustment */
  network: 'plane' | 'height' | 'plane+height' | '3d'
  /** row checks beyond the reader's (the engine's own guard: nothing reaches the solver unchecked) */
  validate(o: ObservationRecord): ModelIssue[]
  /** stations the row touches */
  stations(o: ObservationRecord): string[]
  /** a-priori σ of the row from the profile (m or rad); null when the geometry it needs is unknown */
  profileSigma(o: ObservationRecord, ctx: SigmaContext): number | null
}

/**
 * `out` for an equation: the caller's reusable scratch row (its term count reset
 * to 0), or a new one. Linearizing a large network every iteration then
 * allocates nothing per row.
 */
export function linearizedInto(out?: Linearized): Linearized {
  if (!out) return { computed: 0, cols: [], coef: [] }
  out.computed = 0
  out.size = 0
  return out
}

export function pushTerm(out: Linearized, col: number, value: number): void {
  if (col >= 0) {
    if (out.size === undefined) {
      out.cols.push(col)
      out.coef.push(value)
    } else {
      out.cols[out.size] = col
      out.coef[out.size] = value
      out.size++
    }
  }
}
