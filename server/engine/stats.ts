// Test statistics of the adjustment: quantiles of the normal, χ², t and F
// distributions (from jstat), the data-snooping constants and Pope's τ quantile.
//
// Sources: Baarda, W. (1968) A testing procedure for use in geodetic networks,
// Netherlands Geodetic Commission, Publications on Geodesy 2(5) — w-test,
// α0 = 0.001, β0 = 0.80 → critical value 3.29, non-centrality δ0 = 4.13;
// Pope, A.J. (1976) The statistics of residuals and the detection of outliers,
// NOAA Technical Report NOS 65 NGS 1 — τ distribution,
// τ = t·√r / √(r − 1 + t²) with t from Student's t with r − 1 degrees of freedom.

import jStat from 'jstat'

export const normalQuantile = (p: number): number => jStat.normal.inv(p, 0, 1)
export const chiSquareQuantile = (p: number, dof: number): number => jStat.chisquare.inv(p, dof)
export const studentTQuantile = (p: number, dof: number): number => jStat.studentt.inv(p, dof)
export const fQuantile = (p: number, df1: number, df2: number): number => jStat.centralF.inv(p, df1, df2)

/** Two-sided critical value of the w-test for significance level alpha0. */
export function wCritical(alpha0: number): number {
  return normalQuantile(1 - alpha0 / 2)
}

/** Baarda's non-centrality δ0 for a two-sided test at alpha0 with power beta0. */
export function delta0(alpha0: number, beta0: number): number {
  return normalQuantile(1 - alpha0 / 2) + normalQuantile(beta0)
}

/** Critical value of Pope's τ test with r degrees of freedom (two-sided at alpha0). */
export function tauCritical(alpha0: number, r: number): number | null {
  if (r <= 1) return null
  const t = studentTQuantile(1 - alpha0 / 2, r - 1)
  return (t * Math.sqrt(r)) / Math.sqrt(r - 1 + t * t)
}

/** Two-sided χ² interval for vᵀPv with r degrees of freedom at level alpha. */
export function chiSquareBounds(alpha: number, r: number): { lower: number; upper: number } {
  if (r <= 0) return { lower: 0, upper: 0 }
  return { lower: chiSquareQuantile(alpha / 2, r), upper: chiSquareQuantile(1 - alpha / 2, r) }
}

/**
 * Scale from 1σ to the given confidence for a 2D ellipse: √χ²(2, p) when σ0 is
 * known a priori, √(2·F(p; 2, r)) when it is estimated from r degrees of freedom.
 */
export function ellipseScale(confidence: number, estimated: boolean, r: number): number {
  if (estimated && r > 0) return Math.sqrt(2 * fQuantile(confidence, 2, r))
  return Math.sqrt(chiSquareQuantile(confidence, 2))
}

/** 1D counterpart (height standard deviations): z or t quantile. */
export function lineScale(confidence: number, estimated: boolean, r: number): number {
  if (estimated && r > 0) return studentTQuantile(1 - (1 - confidence) / 2, r)
  return normalQuantile(1 - (1 - confidence) / 2)
}
