/**
 * I^2 and H^2 from tau^2 and the typical within-study variance.
 *
 * References:
 * - Higgins, J. P. T. & Thompson, S. G. (2002). Quantifying heterogeneity in a meta-analysis.
 *   Statistics in Medicine 21: 1539-1558 (eq. 9: s^2 = (k - 1) sum w / ((sum w)^2 - sum w^2)).
 * - Harbord, R. M. & Higgins, J. P. T. (2008). Meta-regression in Stata. The Stata Journal 8:
 *   493-519 (residual I^2 with moderators).
 *
 * With moderators the typical within-study variance generalises to s^2 = (k - p) / tr P, P the
 * projection of weighted-fit.ts at tau^2 = 0; for p = 1 this is Higgins & Thompson's s^2. With
 * this s^2, the DerSimonian-Laird tau^2 gives I^2 = (Q_E - (k - p)) / Q_E, Harbord & Higgins'
 * residual I^2.
 */

/**
 * s^2 = (k - p) / tr P(0). Input: k > p and tr P(0) > 0 (true for a full-rank design).
 * Example: three studies with variance 0.1 each: tr P = 30 - 10 = 20, s^2 = 2 / 20 = 0.1.
 */
export function typicalWithinStudyVariance(effectiveK: number, p: number, tracePAtZero: number): number {
  return (effectiveK - p) / tracePAtZero;
}

/** I^2 in percent, 100 tau^2 / (tau^2 + s^2). Example: i2Percent(0.3, 0.1) -> 75. */
export function i2Percent(tau2: number, typicalVariance: number): number {
  return (100 * tau2) / (tau2 + typicalVariance);
}

/** H^2 = (tau^2 + s^2) / s^2. Example: h2Ratio(0.3, 0.1) -> 4. */
export function h2Ratio(tau2: number, typicalVariance: number): number {
  return (tau2 + typicalVariance) / typicalVariance;
}
