// Chance flags of data snooping, checked against jstat's Poisson distribution
// (an independent general-purpose library) and the definition of α0.
import { describe, expect, it } from 'vitest'
import jStat from 'jstat'
import { chanceFlags, poissonAtLeast } from '../../shared/chance'

describe('flags expected by chance', () => {
  it('expects n·α0 flags (property: each test rejects with probability α0)', () => {
    expect(chanceFlags(9267, 9, 0.001).expected).toBeCloseTo(9.267, 12)
    expect(chanceFlags(283, 0, 0.001).expected).toBeCloseTo(0.283, 12)
  })

  it('P(X ≥ k) matches jstat.poisson.cdf for small and large λ', () => {
    for (const [k, lambda] of [[1, 0.283], [3, 0.283], [9, 9.267], [15, 9.267], [20, 9.267], [0, 4], [120, 100], [2, 0.05]] as const) {
      const reference = k === 0 ? 1 : 1 - jStat.poisson.cdf(k - 1, lambda)
      expect(Math.abs(poissonAtLeast(k, lambda) - reference)).toBeLessThan(1e-9)
    }
  })

  it('stays finite past the underflow of e^−λ (λ = 800)', () => {
    const p = poissonAtLeast(800, 800)
    expect(p).toBeGreaterThan(0.45)
    expect(p).toBeLessThan(0.55)
  })

  it('the issue\'s 1,000-station run: 9 flags among 9,267 tests at α0 = 0.001 are within chance; 30 are not', () => {
    expect(chanceFlags(9267, 9, 0.001).withinChance).toBe(true)
    expect(chanceFlags(9267, 30, 0.001).withinChance).toBe(false)
    // one flag among the 283 demo observations happens by chance about one time in four (1 − e^−0.283 ≈ 0.25)
    expect(chanceFlags(283, 1, 0.001).withinChance).toBe(true)
    expect(chanceFlags(283, 2, 0.001).withinChance).toBe(false)
  })
})
