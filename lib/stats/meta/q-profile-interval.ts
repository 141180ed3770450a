/**
 * Q-profile confidence interval for tau^2 (and through s^2 for I^2 and H^2).
 *
 * References:
 * - Viechtbauer, W. (2007). Confidence intervals for the amount of heterogeneity in meta-analysis.
 *   Statistics in Medicine 26: 37-52.
 *
 * Q(tau^2) (the generalised Q at weights 1 / (v_i + tau^2)) follows chi-square(k - p) at the true
 * tau^2 and decreases in tau^2. The (1 - alpha) interval is {tau^2 >= 0 : c_lo <= Q(tau^2) <= c_hi}
 * with c_lo, c_hi the alpha/2 and 1 - alpha/2 chi-square quantiles:
 *   lower limit: the root of Q = c_hi, or 0 when Q(0) <= c_hi;
 *   upper limit: the root of Q = c_lo, or 0 when Q(0) <= c_lo, in which case the whole interval
 *   is {0} (the estimates agree more closely than their sampling variances predict).
 */
import { chiSquareQuantile } from "../distributions/chi-square";
import type { WeightedFit } from "./weighted-fit";
import { solveGeneralisedQ } from "./generalised-q-root";
import type { IterationControl } from "./tau2-estimate";

/** How the interval is obtained, for every output that shows it. */
export const Q_PROFILE_DESCRIPTION =
  "Q-profile: the tau^2 values at which the generalised Q equals the chi-square(k - p) quantiles (Viechtbauer 2007, Statistics in Medicine 26: 37-52); a limit is 0 when Q at tau^2 = 0 is already below its quantile; I^2 and H^2 limits follow from the tau^2 limits.";

export interface QProfileLimits {
  readonly lower: number;
  readonly upper: number;
  readonly lowerAtZero: boolean;
  readonly upperAtZero: boolean;
  readonly converged: boolean;
  /** The chi-square quantiles c_lo and c_hi. */
  readonly quantiles: readonly [number, number];
}

/**
 * Input: a workspace on a full-rank problem with k > p; Q(0) of that problem; level in (0, 1);
 * `start` a guess near the limits (the tau^2 estimate). Returns both limits with the boundary flags.
 * Leaves the workspace at some evaluation.
 * Example: the BCG trials (Q(0) = 152.2, 12 df) give about [0.12, 1.11] at 95%.
 */
export function qProfileInterval(fit: WeightedFit, qAtZero: number, level: number, start: number, control: IterationControl): QProfileLimits {
  const df = fit.problem.effectiveK - fit.problem.p;
  const alpha = 1 - level;
  const lowQuantile = chiSquareQuantile(alpha / 2, df);
  const highQuantile = chiSquareQuantile(1 - alpha / 2, df);
  const quantiles = [lowQuantile, highQuantile] as const;
  if (qAtZero <= lowQuantile) return { lower: 0, upper: 0, lowerAtZero: true, upperAtZero: true, converged: true, quantiles };
  // Both limits start from `start`; Q there is formed once and shared.
  fit.evaluate(start);
  const atStart = { tau2: start, q: fit.q, qSlope: fit.qSlope };
  const upper = solveGeneralisedQ(fit, lowQuantile, start, control, atStart);
  if (qAtZero <= highQuantile) return { lower: 0, upper: upper.tau2, lowerAtZero: true, upperAtZero: false, converged: upper.converged, quantiles };
  const lower = solveGeneralisedQ(fit, highQuantile, start < upper.tau2 ? start : 0, control, atStart);
  return { lower: lower.tau2, upper: upper.tau2, lowerAtZero: false, upperAtZero: false, converged: lower.converged && upper.converged, quantiles };
}
