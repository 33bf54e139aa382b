// Deterministic plain-text report of an adjustment: verdict, coordinates with
// standard deviations and ellipses, residuals sorted by |w| with flags, the
// redundancy report, the global test and the numerical health. Layout is ours.

import type { AdjustmentResult, NetworkSummary, ObservationResult } from './types'

const f = (v: number | null | undefined, d: number, w = 0): string =>
  (v === null || v === undefined || !Number.isFinite(v) ? '—' : v.toFixed(d)).padStart(w)

export const CAUTION =
  'Caution: these coordinates must be checked against local regulations and licensed practice before use.'

export function formatReport(result: AdjustmentResult): string {
  const out: string[] = []
  const g = result.globalTest
  const conf = Math.round(result.settings.confidence * 100)
  out.push('Tiepoint network adjustment')
  out.push('='.repeat(27))
  out.push(
    g.passed !== null
      ? `${g.passed ? 'The network fits its a-priori precision' : 'The network does NOT fit its a-priori precision'}: ` +
          `σ̂0 = ${f(result.sigma0, 3)}, global test ${g.passed ? 'passed' : 'failed'} at ${result.settings.alpha * 100} %.`
      : 'No redundancy: the network is solved but nothing is checked (degrees of freedom 0).',
  )
  const flagged = result.observations.filter((o) => o.flagged)
  const weak = result.observations.filter((o) => o.weak && !o.excluded && o.redundancy !== null)
  out.push(`Flagged observations: ${flagged.length}; weakly checked (r_i < ${result.settings.weakRedundancy}): ${weak.length}.`)
  out.push('')
  out.push(`Settings: datum ${result.settings.datum}, scaling ${result.settings.scaling}, α = ${result.settings.alpha}, α0 = ${result.settings.alpha0}, β0 = ${result.settings.beta0}`)
  out.push(`Iterations ${result.iterations}; observations n = ${result.counts.n}, unknowns u = ${result.counts.u}, redundancy r = ${result.counts.r}`)
  const gr = result.gridReduction
  const n3 = result.network3d
  if (n3) {
    out.push(
      `Combined 3D adjustment: ${n3.vectors} GNSS vector${n3.vectors === 1 ? '' : 's'} with the terrestrial observations on the ellipsoid a = ${f(n3.ellipsoid.a, 3)} m` +
        `${n3.ellipsoid.inverseFlattening ? `, 1/f = ${f(n3.ellipsoid.inverseFlattening, 9)}` : ''}; heights H = h − N with N = ${f(n3.geoidSeparationM, 3)} m.`,
    )
    out.push('  The deflection of the vertical is ignored: the ellipsoid normal stands for the plumb line (directions, zenith angles, levelling).')
    if (n3.heightsAssumed.length) out.push(`  No height known for ${n3.heightsAssumed.join(', ')} before the adjustment (mean known height used to start).`)
  } else if (gr?.applied && gr.projectHeightM === null) {
    out.push(
      `Grid and ground: ${gr.distances} distance${gr.distances === 1 ? '' : 's'} reduced to the grid; combined factor mean ${f(gr.meanCombinedFactor, 8)} ` +
        `(${f(gr.minCombinedFactor, 8)} … ${f(gr.maxCombinedFactor, 8)}) = scale factor ${f(gr.meanScaleFactor, 8)} × elevation factor ${f(gr.meanElevationFactor, 8)}; ` +
        `geoid separation ${f(gr.geoidSeparationM, 2)} m, k by ${gr.method === 'midpoint' ? 'mid-point' : "Simpson's rule"}` +
        (gr.heightsAssumed.length ? `; no height known for ${gr.heightsAssumed.join(', ')} (mean known height used)` : ''),
    )
    out.push(
      `  ${gr.directions} direction${gr.directions === 1 ? '' : 's'}, angle${gr.directions === 1 ? '' : 's'} and azimuth${gr.directions === 1 ? '' : 's'} reduced to grid chords ` +
        `(arc-to-chord up to ${f(gr.maxArcToChordArcsec, 2)}″, target height; azimuths also by the grid convergence).`,
    )
  } else if (gr?.applied) {
    out.push(
      `Project height: local plane at ${f(gr.projectHeightM, 3)} m; ${gr.distances} ground distance${gr.distances === 1 ? '' : 's'} reduced to that height ` +
        `(factor mean ${f(gr.meanCombinedFactor, 8)}, sphere R ${f(gr.radiusM, 0)} m).`,
    )
  } else if (gr) {
    out.push('Grid and ground: local plane, horizontal distances used as measured; slope distances at the mean height of their marks.')
  }
  if (result.refraction && result.refraction.zeniths > 0) {
    out.push(
      `Refraction: coefficient k = ${result.refraction.k.toFixed(3)} ± ${result.refraction.sigmaK.toFixed(3)} on ${result.refraction.zeniths} zenith angle${result.refraction.zeniths === 1 ? '' : 's'} ` +
        `(refraction angle k·S/2R; σk enters each trigonometric height as σk·D²/2R).`,
    )
  }
  out.push('')
  out.push('Global test (two-sided χ² on vᵀPv)')
  const netLine = (name: string, s: NetworkSummary) =>
    `  ${name.padEnd(7)} vᵀPv ${f(s.globalTest.statistic, 3, 10)}  interval [${f(s.globalTest.lower, 3)}, ${f(s.globalTest.upper, 3)}]  r ${String(s.dof).padStart(5)}  σ̂0 ${f(s.sigma0, 3)}  ${s.globalTest.passed === null ? 'not applicable (r = 0)' : s.globalTest.passed ? 'passed' : 'FAILED'}`
  out.push(netLine('all', { dof: result.dof, sigma0: result.sigma0, globalTest: g } as NetworkSummary))
  if (result.plane) out.push(netLine('plane', result.plane))
  if (result.height) out.push(netLine('height', result.height))
  if (result.network3d) out.push(netLine('3D', result.network3d))
  out.push('')
  out.push(`Coordinates (m), standard deviations (mm), ellipses at 1σ and ${conf} % (mm, major-axis azimuth in degrees)`)
  out.push(
    `  ${'station'.padEnd(12)} ${'east'.padStart(14)} ${'north'.padStart(14)} ${'height'.padStart(10)} ${'σE'.padStart(6)} ${'σN'.padStart(6)} ${'σH'.padStart(6)} ${'a'.padStart(6)} ${'b'.padStart(6)} ${'az'.padStart(6)} ${`a${conf}`.padStart(6)}  status`,
  )
  for (const s of result.stations) {
    const mm = (v: number | null) => (v === null ? null : v * 1000)
    out.push(
      `  ${s.name.padEnd(12)} ${f(s.east, 4, 14)} ${f(s.north, 4, 14)} ${f(s.height, 4, 10)} ${f(mm(s.sdEast), 1, 6)} ${f(mm(s.sdNorth), 1, 6)} ${f(mm(s.sdHeight), 1, 6)} ` +
        `${f(mm(s.ellipse?.semiMajor ?? null), 1, 6)} ${f(mm(s.ellipse?.semiMinor ?? null), 1, 6)} ${f(s.ellipse?.azimuthDeg, 1, 6)} ${f(mm(s.ellipse95?.semiMajor ?? null), 1, 6)}  ${s.fixed ? 'fixed' : s.kind}`,
    )
  }
  out.push('')
  out.push(`Residuals sorted by |w| (critical |w| ${f(result.critical.w, 2)}, τ critical ${f(result.critical.tau, 2)}, δ0 ${f(result.critical.delta0, 2)})`)
  out.push(
    `  ${'line'.padStart(5)} ${'kind'.padEnd(19)} ${'at'.padEnd(8)} ${'from'.padEnd(8)} ${'to'.padEnd(8)} ${'residual'.padStart(10)} ${'σ'.padStart(8)} ${'r_i'.padStart(5)} ${'w'.padStart(7)} ${'MDB'.padStart(9)} ${'effect mm'.padStart(9)}  flag`,
  )
  const key = (o: ObservationResult) => (o.w === null ? -1 : Math.abs(o.w))
  const sorted = [...result.observations].sort((a, b) => key(b) - key(a) || a.line - b.line)
  for (const o of sorted) {
    const unit = o.residualUnit === 'arcsec' ? '″' : 'm'
    const flag = o.excluded ? 'excluded' : o.remark && o.redundancy === null ? 'not used' : o.flagged ? 'FLAG w' : o.tauFlagged ? 'FLAG τ' : o.weak ? 'weak' : ''
    const d = o.residualUnit === 'arcsec' ? 1 : 4
    out.push(
      `  ${String(o.line).padStart(5)} ${(o.kind + (o.component ? ` ${o.component}` : '')).padEnd(19)} ${o.at.padEnd(8)} ${(o.from ?? '').padEnd(8)} ${o.to.padEnd(8)} ` +
        `${(f(o.residual, d) + unit).padStart(10)} ${(f(o.sigma, d) + unit).padStart(8)} ${f(o.redundancy, 2, 5)} ${f(o.w, 2, 7)} ${(f(o.mdb, d) + unit).padStart(9)} ${f(o.mdbEffect === null ? null : o.mdbEffect * 1000, 1, 9)}  ${flag}`,
    )
  }
  const vectorRows = result.observations.filter((o) => o.vectorTest && o.component === 'dx')
  if (vectorRows.length) {
    out.push('')
    const dist = vectorRows[0].vectorTest!.distribution
    out.push(`GNSS vector tests, worst first (whole vector, ${dist === 'F' ? 'F(q, r − q) with σ̂0 from the other observations' : 'χ²(q) with σ0 = 1'}, α0 = ${result.settings.alpha0}; residual in the local east, north, up of the vector's start, mm)`)
    const ratio = (o: ObservationResult) => o.vectorTest!.statistic / o.vectorTest!.critical
    for (const o of [...vectorRows].sort((a, b) => ratio(b) - ratio(a) || a.line - b.line)) {
      const t = o.vectorTest!
      out.push(
        `  ${String(o.line).padStart(5)} ${o.at.padEnd(8)} → ${o.to.padEnd(8)} T ${f(t.statistic, 2, 8)}  critical ${f(t.critical, 2, 6)}  ` +
          `e ${f(t.residualEnu[0] * 1000, 1, 6)} n ${f(t.residualEnu[1] * 1000, 1, 6)} u ${f(t.residualEnu[2] * 1000, 1, 6)}  ${t.flagged ? 'FLAG' : ''}`,
      )
    }
  }
  out.push('')
  const used = result.observations.filter((o) => o.redundancy !== null)
  const sumR = used.reduce((a, o) => a + (o.redundancy ?? 0), 0)
  const minR = used.reduce((a, o) => Math.min(a, o.redundancy ?? 1), 1)
  out.push('Redundancy')
  out.push(`  Σ r_i = ${f(sumR, 3)} (r = ${result.dof}); mean ${f(used.length ? sumR / used.length : null, 2)}; smallest ${f(used.length ? minR : null, 2)}; uncontrolled (r_i ≈ 0): ${used.filter((o) => (o.redundancy ?? 0) < 1e-6).length}`)
  out.push('')
  out.push('Numerical health')
  out.push(`  condition estimate (1-norm, column-scaled) ${result.health.conditionEstimate.toExponential(2)}; dominated by ${result.health.dominant ?? '—'}`)
  if (result.relative.length) {
    out.push('')
    out.push(`Relative precision between connected stations (mm; ${conf} % semi-major axis)`)
    for (const r of result.relative) {
      out.push(`  ${r.from.padEnd(10)} → ${r.to.padEnd(10)} d ${f(r.distance, 3, 11)} m  σd ${f(r.sdDistance * 1000, 1, 6)}  a ${f(r.semiMajor * 1000, 1, 6)}  b ${f(r.semiMinor * 1000, 1, 6)}  az ${f(r.azimuthDeg, 1, 6)}  a${conf} ${f(r.semiMajor95 * 1000, 1, 6)}`)
    }
  }
  out.push('')
  out.push(CAUTION)
  return out.join('\n') + '\n'
}
