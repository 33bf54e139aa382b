// The GNSS baseline model's own checks: three numbers, |ρ| < 1, covariance
// positive definite; the plane adjustment refuses vectors with a message.
import { describe, expect, it } from 'vitest'
import { Matrix, EigenvalueDecomposition } from 'ml-matrix'
import { baselineCovarianceCholesky, gnssBaseline } from '../../../../server/engine/models/gnss-baseline'
import { adjustNetwork } from '../../../../server/engine'
import type { BaselineVector, ObservationRecord } from '../../../../server/engine/types'

const row = (vector: BaselineVector | undefined): ObservationRecord => ({
  line: 7, kind: 'gnss_baseline', at: 'A', from: null, to: 'B', value: 100, sigma: null,
  hi: null, ht: null, set: null, lengthKm: null, note: '', vector,
})

const covariance = (v: BaselineVector) => {
  const [sx, sy, sz] = v.sigma
  const [a, b, c] = v.correlation ?? [0, 0, 0]
  return new Matrix([[sx * sx, a * sx * sy, b * sx * sz], [a * sx * sy, sy * sy, c * sy * sz], [b * sx * sz, c * sy * sz, sz * sz]])
}

describe('gnss_baseline checks', () => {
  it('accepts a correlated vector whose covariance ml-matrix finds positive definite, and L·Lᵀ rebuilds it', () => {
    const v: BaselineVector = { d: [60, -80, 0], sigma: [0.003, 0.004, 0.006], correlation: [0.4, -0.3, 0.5] }
    expect(gnssBaseline.validate(row(v))).toEqual([])
    const eig = new EigenvalueDecomposition(covariance(v)).realEigenvalues
    expect(Math.min(...eig)).toBeGreaterThan(0)
    const l = baselineCovarianceCholesky(v)!
    const L = new Matrix([[l[0], 0, 0], [l[3], l[4], 0], [l[6], l[7], l[8]]])
    const back = L.mmul(L.transpose())
    const want = covariance(v)
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) expect(back.get(i, j)).toBeCloseTo(want.get(i, j), 15)
  })

  it('refuses correlations that each lie in (−1, 1) but contradict each other (ml-matrix finds a negative eigenvalue)', () => {
    const v: BaselineVector = { d: [60, -80, 0], sigma: [0.003, 0.003, 0.003], correlation: [0.9, 0.9, -0.9] }
    expect(Math.min(...new EigenvalueDecomposition(covariance(v)).realEigenvalues)).toBeLessThan(0)
    expect(gnssBaseline.validate(row(v))).toEqual([expect.objectContaining({ column: 'correlation', message: expect.stringMatching(/positive definite/) })])
  })

  it('names the column of each bad field', () => {
    expect(gnssBaseline.validate(row(undefined))[0].column).toBe('value')
    expect(gnssBaseline.validate(row({ d: [1, NaN, 2], sigma: [0.003, 0.003, 0.003], correlation: null }))[0].column).toBe('value')
    expect(gnssBaseline.validate(row({ d: [1, 1, 2], sigma: [0.003, 0, 0.003], correlation: null }))[0].column).toBe('sigma')
    expect(gnssBaseline.validate(row({ d: [1, 1, 2], sigma: [0.003, 0.003, 0.003], correlation: [1, 0, 0] }))[0].column).toBe('correlation')
  })

  it('a local-plane run (no CRS) refuses a vector by line and column, asking for a CRS and N', () => {
    const out = adjustNetwork({
      controls: [{ line: 2, station: 'A', east: 0, north: 0, height: 0, sdEast: null, sdNorth: null, sdHeight: null }],
      observations: [row({ d: [60, -80, 0], sigma: [0.003, 0.003, 0.003], correlation: null })],
    })
    expect(out.ok).toBe(false)
    if (!out.ok) expect(out.reason).toMatch(/^line 7, column kind: GNSS baselines need a georeferenced project — a projected CRS and a geoid separation N/)
  })
})
