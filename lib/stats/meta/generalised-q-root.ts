/**
 * The tau^2 at which the generalised Q statistic takes a given value: the Paule-Mandel estimate
 * (target k - p) and the Q-profile confidence limits (chi-square quantiles) are such roots.
 *
 * References:
 * - Paule, R. C. & Mandel, J. (1982). Consensus values and weighting factors. Journal of Research
 *   of the National Bureau of Standards 87: 377-385.
 * - Viechtbauer, W. (2007). Confidence intervals for the amount of heterogeneity in meta-analysis.
 *   Statistics in Medicine 26: 37-52.
 * - Press, W. H. et al. (2007). Numerical Recipes, 3rd ed., section 9.4 (Newton's method
 *   safeguarded by bisection).
 *
 * Q(tau^2) = min over beta of sum w_i (y_i - x_i' beta)^2 is strictly decreasing in tau^2 (each
 * term decreases for fixed beta), with Q(tau^2) < RSS_OLS / tau^2. So a root of Q = target exists
 * and is unique when Q(0) > target > 0, and lies in (0, RSS_OLS / target).
 * The iteration is Newton's method on g(tau^2) = 1/Q(tau^2) - 1/target, which is nearly linear
 * (exactly so when all v_i are equal, Q ~ c / (v + tau^2)), using dQ/dtau^2 = -sum w_i u_i e_i^2:
 *   tau^2 <- tau^2 + Q (Q - target) / (target sum w u e^2).
 * A step that leaves the bracket of known signs is replaced by bisection. Converged when a step
 * is below the tolerance (relative), or when the quadratic rate predicts the error left after it is.
 */
import type { WeightedFit } from "./weighted-fit";
import type { IterationControl } from "./tau2-estimate";

/** Q and -dQ/dtau^2 already known at one tau^2, to spare an evaluation. */
export interface QAtPoint {
  readonly tau2: number;
  readonly q: number;
  readonly qSlope: number;
}

export interface QRoot {
  readonly tau2: number;
  readonly converged: boolean;
  readonly iterations: number;
}

/**
 * Solves Q(tau^2) = target for tau^2 > 0, starting near `start` (with Q there in `atStart`, if known).
 * Input: Q(0) > target > 0 (the caller checks; otherwise the root is 0 or absent).
 * Returns the root, whether the relative change fell below `control.tolerance`, and iterations.
 * Leaves the workspace evaluated near the root.
 * Example: with Q(0) = 152.2 on 12 df (BCG trials), target 12 gives the Paule-Mandel 0.3181.
 */
export function solveGeneralisedQ(fit: WeightedFit, target: number, start: number, control: IterationControl, atStart?: QAtPoint): QRoot {
  let lower = 0;
  let upper = Number.POSITIVE_INFINITY;
  let current = start > 0 ? start : 0;
  let previousStep = Number.NaN;
  for (let iteration = 1; iteration <= control.maxIterations; iteration += 1) {
    let q: number;
    let qSlope: number;
    if (iteration === 1 && atStart !== undefined && atStart.tau2 === current) {
      ({ q, qSlope } = atStart);
    } else {
      fit.evaluate(current);
      ({ q, qSlope } = fit);
    }
    if (q === target) return { tau2: current, converged: true, iterations: iteration };
    if (q > target) lower = Math.max(lower, current);
    else upper = Math.min(upper, current);
    let next = current + (q * (q - target)) / (target * qSlope);
    let newton = true;
    if (!(next > lower && next < upper)) {
      // The bound needs one least-squares pass, so it is formed only when a step overshoots.
      if (upper === Number.POSITIVE_INFINITY) upper = fit.olsResidualSumOfSquares() / target;
      if (!(next > lower && next < upper)) {
        next = 0.5 * (lower + upper);
        newton = false;
      }
    }
    const step = Math.abs(next - current);
    const bracketClosed = Number.isFinite(upper) && upper - lower <= control.tolerance * upper;
    // Newton converges quadratically: once steps shrink like s_n ~ C s_{n-1}^2, the error left after
    // this step is about C s^2 with C = s / s_previous^2, and a further evaluation is not needed.
    const predictedError = newton && step < 0.01 * next ? (step / previousStep ** 2) * step * step : Number.POSITIVE_INFINITY;
    if (step <= control.tolerance * next || bracketClosed || predictedError <= control.tolerance * next) {
      return { tau2: next, converged: true, iterations: iteration };
    }
    previousStep = newton ? step : Number.NaN;
    current = next;
  }
  return { tau2: current, converged: false, iterations: control.maxIterations };
}
