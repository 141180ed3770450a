/**
 * DerSimonian-Laird method-of-moments estimator of tau^2, with Raudenbush's generalisation to
 * meta-regression.
 *
 * References:
 * - DerSimonian, R. & Laird, N. (1986). Meta-analysis in clinical trials. Controlled Clinical
 *   Trials 7: 177-188.
 * - Raudenbush, S. W. (2009). Analyzing effect sizes: random-effects models. In The Handbook of
 *   Research Synthesis and Meta-Analysis, 2nd ed., ch. 16 (the estimator with moderators).
 *
 * tau^2 = max(0, (Q_E - (k - p)) / tr P), with Q_E and P at the inverse-variance weights 1/v_i
 * (P as in weighted-fit.ts). For the intercept-only model tr P = sum w - sum w^2 / sum w.
 */
import { WITH_TRACE, type WeightedFit } from "./weighted-fit";
import { closedFormEstimate, type Tau2Estimate } from "./tau2-estimate";

/**
 * Input: a workspace on a full-rank problem with k > p. Returns the truncated estimate
 * (converged, 0 iterations). Leaves the workspace evaluated at tau^2 = 0.
 * Example: the 13 BCG vaccine trials (log risk ratios) give tau^2 = 0.3088.
 */
export function dersimonianLairdTau2(fit: WeightedFit): Tau2Estimate {
  fit.evaluate(0, WITH_TRACE);
  const { effectiveK, p } = fit.problem;
  return closedFormEstimate((fit.q - (effectiveK - p)) / fit.traceP);
}
