/**
 * What an IRLS fit needs from an exponential family with its link. Every method works on whole
 * arrays (one call per iteration, no per-observation calls), so fits over a million rows stay fast.
 *
 * References:
 * - McCullagh, P. & Nelder, J. A. (1989). Generalized Linear Models, 2nd ed. Chapman & Hall, ch. 2.
 */
export interface GlmFamily {
  readonly name: "binomial" | "poisson";
  readonly link: "logit" | "log";
  /** Why `response` cannot be modelled by this family (first offending index), or null when it can. */
  invalidResponse(response: ArrayLike<number>): string | null;
  /** Starting means (as in McCullagh & Nelder 1989, section 2.5) written into `mean`. */
  initialMean(response: ArrayLike<number>, mean: Float64Array): void;
  /** g(mu), the link. */
  linkOf(mean: number): number;
  /** mu = g^{-1}(eta), elementwise, into `mean`. */
  meanOf(linearPredictor: Float64Array, mean: Float64Array): void;
  /**
   * The IRLS working weights w = (dmu/deta)^2 / V(mu) and working response
   * z = eta + (y - mu) / (dmu/deta), into `weights` and `working`.
   */
  workingWeightsAndResponse(
    linearPredictor: Float64Array,
    mean: Float64Array,
    response: ArrayLike<number>,
    weights: Float64Array,
    working: Float64Array,
  ): void;
  /**
   * mu = g^{-1}(eta) into `mean` (as meanOf) and the residual deviance at it (as deviance), in one
   * pass over the observations: scoring and step-halving need both after every move.
   */
  meanAndDeviance(response: ArrayLike<number>, linearPredictor: Float64Array, mean: Float64Array): number;
  /** The residual deviance 2 sum [l(y; y) - l(mu; y)]. */
  deviance(response: ArrayLike<number>, mean: Float64Array, linearPredictor: Float64Array): number;
  /**
   * The residual deviance when every fitted mean is `mean` = g^{-1}(`linearPredictor`) (the null
   * model), from sums over the response: no per-observation logarithms.
   */
  constantMeanDeviance(response: ArrayLike<number>, mean: number, linearPredictor: number): number;
  /**
   * The log-likelihood at `mean`, with every normalising constant. `deviance`, the residual
   * deviance at the same means when the caller has it, spares the pass where the log-likelihood
   * is a function of it (binary data: l = -D / 2).
   */
  logLikelihood(response: ArrayLike<number>, mean: Float64Array, linearPredictor: Float64Array, deviance?: number): number;
  /** Pearson's chi-square sum (y - mu)^2 / V(mu). */
  pearsonChiSquare(response: ArrayLike<number>, mean: Float64Array): number;
  /** How many fitted means sit within `tolerance` of the edge of the parameter space (0 or 1 / 0). */
  boundaryCount(mean: Float64Array, tolerance: number): number;
}
