// Precision of the adjusted stations: standard deviations, absolute error
// ellipses (1σ and at the settings' confidence) from each station's 2×2 block of
// Qxx, and relative ellipses and distance σ between every pair of stations
// joined by an observation, from Q_ΔΔ = Q_bb + Q_aa − Q_ab − Q_ba.
// Source: Ghilani, C.D. (2017) Adjustment Computations, 6th ed., Wiley, ch. 19
// (error ellipses, relative ellipses), doi:10.1002/9781119390664 — from memory.

import type { CofactorMatrix } from './cofactor'
import { ellipseFromCovariance } from './geometry'
import type { PlaneRow } from './plane'
import type { RelativeResult, StationResult } from './types'

export function roundEllipse(e: { semiMajor: number; semiMinor: number; azimuthDeg: number }) {
  // azimuths that round to 180.0 are the same axis as 0.0
  const az = e.azimuthDeg >= 180 - 1e-9 ? 0 : e.azimuthDeg
  return { semiMajor: e.semiMajor, semiMinor: e.semiMinor, azimuthDeg: az }
}

/** σE, σN and the ellipses of one plane station (columns −1 = held). */
export function planeStationPrecision(st: StationResult, cols: Int32Array, qxx: CofactorMatrix, varFactor: number, scale95: number): void {
  const q = (a: number, b: number) => (a >= 0 && b >= 0 ? qxx.get(a, b) * varFactor : 0)
  const [ce, cn] = cols
  st.sdEast = Math.sqrt(Math.max(q(ce, ce), 0))
  st.sdNorth = Math.sqrt(Math.max(q(cn, cn), 0))
  if (ce >= 0 || cn >= 0) {
    st.ellipse = roundEllipse(ellipseFromCovariance(q(ce, ce), q(cn, cn), q(ce, cn)))
    st.ellipse95 = roundEllipse(ellipseFromCovariance(q(ce, ce), q(cn, cn), q(ce, cn), scale95))
  }
}

/** Relative precision of every pair of plane stations joined by an observation. */
export function relativePrecision(
  rows: PlaneRow[],
  names: string[],
  stationCols: Int32Array[],
  stationOut: Map<string, StationResult>,
  qxx: CofactorMatrix,
  varFactor: number,
  scale95: number,
): RelativeResult[] {
  const relative: RelativeResult[] = []
  // pairs by a numeric key (no string per row of a large network)
  const nS = names.length
  const seen = new Set<number>()
  const q = (i: number, j: number) => (i >= 0 && j >= 0 ? qxx.get(i, j) : 0)
  for (const { def } of rows) {
    if (def.type === 'coord') continue
    for (let k = def.type === 'angle' ? 0 : 1; k < 2; k++) {
      const a = def.at
      const b = k === 0 && def.type === 'angle' ? def.from : def.to
      const key = a < b ? a * nS + b : b * nS + a
      if (seen.has(key) || a === b) continue
      seen.add(key)
      const [ae, an] = stationCols[a]
      const [be, bn] = stationCols[b]
      if (ae < 0 && an < 0 && be < 0 && bn < 0) continue
      const qee = q(be, be) + q(ae, ae) - 2 * q(ae, be)
      const qnn = q(bn, bn) + q(an, an) - 2 * q(an, bn)
      const qen = q(be, bn) + q(ae, an) - q(ae, bn) - q(be, an)
      const A = stationOut.get(names[a])!
      const B = stationOut.get(names[b])!
      const de = B.east! - A.east!
      const dn = B.north! - A.north!
      const d = Math.hypot(de, dn)
      const ge = de / d
      const gn = dn / d
      const e1 = ellipseFromCovariance(qee * varFactor, qnn * varFactor, qen * varFactor)
      relative.push({
        from: names[a],
        to: names[b],
        distance: d,
        semiMajor: e1.semiMajor,
        semiMinor: e1.semiMinor,
        azimuthDeg: roundEllipse(e1).azimuthDeg,
        semiMajor95: e1.semiMajor * scale95,
        sdDistance: Math.sqrt(Math.max((ge * ge * qee + gn * gn * qnn + 2 * ge * gn * qen) * varFactor, 0)),
      })
    }
  }
  return relative
}
