/**
 * Sidik-Jonkman estimator of tau^2.
 *
 * References:
 * - Sidik, K. & Jonkman, J. N. (2005). Simple heterogeneity variance estimation for meta-analysis.
 *   Journal of the Royal Statistical Society C 54: 367-384.
 * - Sidik, K. & Jonkman, J. N. (2005). A note on variance estimation in random effects
 *   meta-regression. Journal of Biopharmaceutical Statistics 15: 823-838 (with moderators).
 *
 * From the crude start tau0^2 = sum a_i e_i^2 / k (ordinary least-squares residuals; intercept only:
 * sum (y - ybar)^2 / k), one weighted step with weights 1 / (v_i / tau0^2 + 1):
 *   tau^2 = tau0^2 Q(tau0^2) / (k - p).
 * The estimate is positive unless the estimates lie exactly on the fitted line.
 */
import type { WeightedFit } from "./weighted-fit";
import { closedFormEstimate, type Tau2Estimate } from "./tau2-estimate";

/**
 * Input: a workspace on a full-rank problem with k > p. Returns the estimate (converged,
 * 0 iterations). Leaves the workspace evaluated at tau0^2.
 * Example: estimates [0, 1, 2] with variances [0.1, 0.1, 0.1]: tau0^2 = 2/3, Q = 2 / (0.1 + 2/3),
 * tau^2 = (2/3) Q / 2 = 0.8696.
 */
export function sidikJonkmanTau2(fit: WeightedFit): Tau2Estimate {
  const { effectiveK, p } = fit.problem;
  const initial = fit.olsResidualSumOfSquares() / effectiveK;
  if (!(initial > 0)) return closedFormEstimate(0);
  fit.evaluate(initial);
  return closedFormEstimate((initial * fit.q) / (effectiveK - p));
}
