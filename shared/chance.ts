// How many data-snooping flags chance alone gives. Each of n tested observations
// is flagged with probability α0 when the model is right and there is no
// blunder (that is what α0 means: Baarda 1968, A testing procedure for use in
// geodetic networks, Netherlands Geodetic Commission 2(5)), so the expected
// number of flags is n·α0 (property of the test). Treating the tests as
// independent, the count is close to Poisson(n·α0) for small α0 — an
// approximation: standardized residuals of one network are correlated.

export interface ChanceFlags {
  /** observations tested (not excluded, with a standardized residual) */
  tested: number
  flagged: number
  /** n·α0 */
  expected: number
  /** P(X ≥ flagged) for X ~ Poisson(n·α0) */
  pAtLeast: number
  /** the count is no more than chance alone would often give (P(X ≥ k) ≥ 5 %) */
  withinChance: boolean
}

/** P(X ≥ k) for X ~ Poisson(λ), summed in log space so large λ does not underflow. */
export function poissonAtLeast(k: number, lambda: number): number {
  if (k <= 0) return 1
  if (lambda <= 0) return 0
  let term = Math.exp(-lambda)
  if (term === 0) {
    // λ beyond ~745: start from the log of the first term
    let logTerm = -lambda
    let sum = 0
    for (let i = 0; i < k; i++) {
      sum += Math.exp(logTerm)
      logTerm += Math.log(lambda) - Math.log(i + 1)
    }
    return Math.min(1, Math.max(0, 1 - sum))
  }
  let below = 0
  for (let i = 0; i < k; i++) {
    below += term
    term *= lambda / (i + 1)
  }
  return Math.min(1, Math.max(0, 1 - below))
}

export function chanceFlags(tested: number, flagged: number, alpha0: number): ChanceFlags {
  const expected = tested * alpha0
  const pAtLeast = poissonAtLeast(flagged, expected)
  return { tested, flagged, expected, pAtLeast, withinChance: pAtLeast >= 0.05 }
}
