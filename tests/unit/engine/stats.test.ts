// Quantiles and test constants against published tables.
import { describe, expect, it } from 'vitest'
import jStat from 'jstat'
import {
  chiSquareQuantile,
  delta0,
  ellipseScale,
  fQuantile,
  normalQuantile,
  studentTQuantile,
  tauCritical,
  wCritical,
} from '../../../server/engine/stats'

// NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.7 tables
// (values recalled from memory, given there to 3 decimals).
describe('quantiles vs NIST/SEMATECH e-Handbook §1.3.6.7', () => {
  it.each([
    // §1.3.6.7.4 Critical values of the chi-square distribution: [p, ν, value]
    [0.95, 2, 5.991],
    [0.95, 5, 11.07],
    [0.95, 10, 18.307],
    [0.975, 10, 20.483],
    [0.025, 10, 3.247],
    [0.05, 10, 3.94],
    [0.95, 20, 31.41],
  ])('χ² quantile p=%f ν=%i is %f (§1.3.6.7.4)', (p, nu, v) => {
    expect(chiSquareQuantile(p, nu)).toBeCloseTo(v, 2)
  })
  it.each([
    // §1.3.6.7.2 Critical values of Student's t distribution (upper tail 0.025, 0.05)
    [0.975, 1, 12.706],
    [0.975, 5, 2.571],
    [0.975, 10, 2.228],
    [0.975, 20, 2.086],
    [0.95, 10, 1.812],
  ])('t quantile p=%f ν=%i is %f (§1.3.6.7.2)', (p, nu, v) => {
    expect(studentTQuantile(p, nu)).toBeCloseTo(v, 2)
  })
  it.each([
    // §1.3.6.7.3 Upper critical values of the F distribution at 5 %
    [2, 5, 5.786],
    [2, 10, 4.103],
    [2, 20, 3.493],
    [3, 10, 3.708],
  ])('F(0.95; %i, %i) is %f (§1.3.6.7.3)', (d1, d2, v) => {
    expect(fQuantile(0.95, d1, d2)).toBeCloseTo(v, 2)
  })
  it('normal quantiles (§1.3.6.7.1 cumulative normal table): z(0.975) = 1.960, z(0.80) = 0.842', () => {
    expect(normalQuantile(0.975)).toBeCloseTo(1.96, 3)
    expect(normalQuantile(0.8)).toBeCloseTo(0.8416, 3)
  })
})

describe('data-snooping constants vs Baarda (1968), NGC Publications on Geodesy 2(5)', () => {
  it('α0 = 0.001 gives the critical value 3.29', () => {
    expect(wCritical(0.001)).toBeCloseTo(3.29, 2)
  })
  it('α0 = 0.001, β0 = 0.80 give δ0 = 4.13', () => {
    expect(delta0(0.001, 0.8)).toBeCloseTo(4.13, 2)
  })
  it('the critical value really is the two-sided normal quantile (cross-check with jstat cdf)', () => {
    const c = wCritical(0.001)
    expect(2 * (1 - jStat.normal.cdf(c, 0, 1))).toBeCloseTo(0.001, 9)
  })
})

describe('derived scales', () => {
  it('95 % ellipse scale with σ0 known is √χ²(2, 0.95) = 2.4477 (common practice, e.g. Ghilani 2017 ch. 19, from memory)', () => {
    expect(ellipseScale(0.95, false, 10)).toBeCloseTo(2.4477, 4)
  })
  it('95 % ellipse scale with σ0 estimated is √(2·F(0.95; 2, r)): r = 10 gives √(2·4.103) (NIST §1.3.6.7.3)', () => {
    expect(ellipseScale(0.95, true, 10)).toBeCloseTo(Math.sqrt(2 * 4.103), 2)
  })
  it('Pope (1976) τ critical value: τ²/r follows Beta(1/2, (r − 1)/2), so P(|τ| > τc) = α0 (jstat beta cdf, another route than the t transform), and it tends to the normal value for large r', () => {
    const r = 20
    const tc = tauCritical(0.001, r)!
    expect(1 - jStat.beta.cdf((tc * tc) / r, 0.5, (r - 1) / 2)).toBeCloseTo(0.001, 9)
    // τ is bounded by √r: |τ| ≤ √r for any residual
    expect(tauCritical(0.001, r)!).toBeLessThan(Math.sqrt(r))
    expect(tauCritical(0.001, 100000)!).toBeCloseTo(3.29, 2)
  })
})
