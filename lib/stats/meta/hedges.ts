/**
 * Hedges' (unweighted least-squares, method of moments) estimator of tau^2.
 *
 * References:
 * - Hedges, L. V. & Olkin, I. (1985). Statistical Methods for Meta-Analysis. Academic Press, ch. 9.
 * - Raudenbush, S. W. (2009). Analyzing effect sizes: random-effects models. In The Handbook of
 *   Research Synthesis and Meta-Analysis, 2nd ed., ch. 16 (the version with moderators).
 *
 * With the ordinary least-squares residuals e (case-weighted), E[sum a e^2] = tr(P_O V) + tau^2 (k - p)
 * where P_O = I - X (X'AX)^{-1} X'A, so
 *   tau^2 = max(0, (sum a_i e_i^2 - sum a_i v_i + tr[(X'AX)^{-1} X'AVX]) / (k - p)).
 * Intercept only: sum (y - ybar)^2 / (k - 1) - sum v / k.
 */
import { designMatrix } from "../linear/design-matrix";
import { weightedCrossProducts } from "../linear/weighted-cross-products";
import type { WeightedFit } from "./weighted-fit";
import { closedFormEstimate, type Tau2Estimate } from "./tau2-estimate";

/**
 * Input: a workspace on a full-rank problem with k > p. Returns the truncated estimate
 * (converged, 0 iterations). Leaves the workspace at its unweighted (least-squares) evaluation.
 * Example: estimates [0, 1, 2] with variances [0.1, 0.1, 0.1] give 1 - 0.1 = 0.9.
 */
export function hedgesTau2(fit: WeightedFit): Tau2Estimate {
  const { k, p, effectiveK, variances, caseWeights, design } = fit.problem;
  const residualSum = fit.olsResidualSumOfSquares();
  fit.evaluateUnweighted();
  const scaledVariances = new Float64Array(k);
  let sumVariances = 0;
  for (let i = 0; i < k; i += 1) {
    scaledVariances[i] = (caseWeights === null ? 1 : caseWeights[i]!) * variances[i]!;
    sumVariances += scaledVariances[i]!;
  }
  const names = Array.from({ length: p }, (_, j) => `z${j}`);
  const { xtwx: xtavx } = weightedCrossProducts(designMatrix(k, names, design), scaledVariances, scaledVariances);
  let trace = 0;
  for (let r = 0; r < p; r += 1) for (let c = 0; c < p; c += 1) trace += fit.inverse[r * p + c]! * xtavx[c * p + r]!;
  return closedFormEstimate((residualSum - (sumVariances - trace)) / (effectiveK - p));
}
