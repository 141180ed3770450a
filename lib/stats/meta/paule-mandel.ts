/**
 * Paule-Mandel estimator of tau^2: the value at which the generalised Q statistic equals its
 * expectation k - p.
 *
 * References:
 * - Paule, R. C. & Mandel, J. (1982). Consensus values and weighting factors. Journal of Research
 *   of the National Bureau of Standards 87: 377-385.
 * - DerSimonian, R. & Kacker, R. (2007). Random-effects model for meta-analysis of clinical
 *   trials: an update. Contemporary Clinical Trials 28: 105-114.
 *
 * tau^2 = 0 when Q(0) <= k - p; otherwise the unique root of Q(tau^2) = k - p
 * (generalised-q-root.ts).
 */
import type { WeightedFit } from "./weighted-fit";
import { solveGeneralisedQ } from "./generalised-q-root";
import type { IterationControl, Tau2Estimate } from "./tau2-estimate";

/**
 * Input: a workspace on a full-rank problem with k > p; `start` a guess (e.g. the DL estimate).
 * Returns the estimate with convergence and iteration count.
 * Example: the 13 BCG vaccine trials give tau^2 = 0.3181.
 */
export function pauleMandelTau2(fit: WeightedFit, start: number, control: IterationControl): Tau2Estimate {
  const { effectiveK, p } = fit.problem;
  const target = effectiveK - p;
  fit.evaluate(0);
  if (fit.q <= target) return { tau2: 0, converged: true, iterations: 0, standardError: null };
  const root = solveGeneralisedQ(fit, target, start, control);
  return { tau2: root.tau2, converged: root.converged, iterations: root.iterations, standardError: null };
}
