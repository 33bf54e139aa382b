// An invented adjustment result of a given size, for the storage and page
// benchmarks: a perturbed grid's stations, about six neighbours each, a
// direction and a distance both ways, and the connected pairs. The values are
// made up (they do not come from the engine); they stand in only where the
// time taken does not depend on what the numbers are.
import type { AdjustmentResult } from '../../server/engine/types'

/**
 * For 10,000 stations: about 30,000 connected pairs and 120,000 observation
 * results (a direction and a distance each way on every pair), a little more
 * than the engine bench's networks give.
 */
export function inventResult(stations: number): AdjustmentResult {
  const side = Math.round(Math.sqrt(stations))
  const name = (i: number, j: number) => `P${i}_${j}`
  const st: AdjustmentResult['stations'] = []
  const obs: AdjustmentResult['observations'] = []
  const rel: AdjustmentResult['relative'] = []
  let line = 1
  for (let i = 0; i < side; i++) for (let j = 0; j < side; j++) {
    const fixed = (i === 0 || i === side - 1) && (j === 0 || j === side - 1)
    const e = { semiMajor: 0.004 + (i % 7) / 1000, semiMinor: 0.002, azimuthDeg: (i * 7 + j) % 180 }
    st.push({ name: name(i, j), east: 5000 + i * 200.123, north: 8000 + j * 199.877, height: null, sdEast: fixed ? 0 : 0.002, sdNorth: fixed ? 0 : 0.002, sdHeight: null,
      ellipse: fixed ? null : e, ellipse95: fixed ? null : { ...e, semiMajor: e.semiMajor * 2.45, semiMinor: e.semiMinor * 2.45 }, fixed, kind: fixed ? 'control' : 'new', controlled: { east: fixed, north: fixed, height: false } })
    for (const [di, dj] of [[1, 0], [0, 1], [1, 1]] as const) {
      if (i + di >= side || j + dj >= side) continue
      const to = name(i + di, j + dj)
      rel.push({ from: name(i, j), to, distance: 200 * Math.hypot(di, dj), semiMajor: 0.003, semiMinor: 0.002, azimuthDeg: 45, semiMajor95: 0.0073, sdDistance: 0.002 })
      for (const [at, tgt] of [[name(i, j), to], [to, name(i, j)]] as const) {
        for (const kind of ['direction', 'horizontal_distance'] as const) {
          const w = ((line * 7919) % 1000) / 250 - 2
          obs.push({ id: null, line: line++, kind, component: null, at, from: null, to: tgt, observed: kind === 'direction' ? 123.456789 : 200.1234, adjusted: kind === 'direction' ? 123.4567 : 200.1231,
            valueUnit: kind === 'direction' ? 'deg' : 'm', residual: kind === 'direction' ? 1.2 : 0.0012, sigma: kind === 'direction' ? 2 : 0.002, residualUnit: kind === 'direction' ? 'arcsec' : 'm',
            redundancy: 0.55, w, flagged: Math.abs(w) > 3.29, tau: w, tauFlagged: false, mdb: kind === 'direction' ? 11 : 0.011, mdbEffect: 0.004, excluded: false, weak: false, remark: null })
        }
      }
    }
  }
  const settings = { datum: 'as-stored', scaling: 'a-posteriori', confidence: 0.95, alpha: 0.05, alpha0: 0.001, beta0: 0.8, maxIterations: 10, weakRedundancy: 0.2 } as const
  const n = obs.length
  const u = 2 * (st.length - 4) + st.length
  return {
    converged: true, iterations: 2, dof: n - u, sigma0: 1.02, globalTest: { statistic: n - u, lower: (n - u) * 0.97, upper: (n - u) * 1.03, passed: true },
    stations: st, observations: obs, relative: rel, health: { conditionEstimate: 1e4, dominant: null }, counts: { n, u, r: n - u },
    critical: { w: 3.29, tau: 3.3, delta0: 4.13 }, settings: { ...settings },
  }
}

