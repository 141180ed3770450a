/**
 * The mean effect at given moderator values, its confidence interval, and the prediction interval
 * for the true effect in a new study (site) with those values.
 *
 * References:
 * - Higgins, J. P. T., Thompson, S. G. & Spiegelhalter, D. J. (2009). A re-evaluation of
 *   random-effects meta-analysis. Journal of the Royal Statistical Society A 172: 137-159
 *   (mu +/- t_{k-2} sqrt(tau^2 + SE(mu)^2) for the intercept-only model).
 *
 * Degrees of freedom: t with k - p - 1 df for every model. For the intercept-only model (p = 1)
 * this is Higgins et al.'s k - 2 (k studies, one mean, one variance component). With moderators
 * we count the p coefficients and tau^2 the same way; this is our generalisation, not a published
 * standard (other choices in use: k - p, or the normal quantile). The standard error of the mean
 * comes from the coefficient covariance of the chosen test (z or HKSJ). The mean's own interval
 * uses that test's reference distribution. The common-effect model has no prediction interval
 * (it assumes tau^2 = 0, so the interval would be the confidence interval).
 */
import { studentTQuantile } from "../distributions/student-t";
import { ModelInputError } from "../model-error";
import { rowToConditionedScale } from "./design-conditioning";
import { criticalValue } from "./meta-inference";
import type { MetaModelResult, Prediction, PredictionInterval, Unavailable } from "./meta-result";

/** What a prediction reads from a fit (a MetaModelResult has all of it). */
export type PredictionSource = Pick<MetaModelResult, "linearPredictor" | "test" | "k" | "p" | "confidenceLevel" | "method"> & {
  readonly heterogeneity: { readonly tau2: number };
};

/** t degrees of freedom of the prediction interval: k - p - 1. */
export function predictionDf(k: number, p: number): number {
  return k - p - 1;
}

/**
 * Predicts at the design row `row` (user's coding, e.g. from encodeModeratorRow; [1] for the
 * intercept-only model).
 * Input: a row of p finite values. Returns the mean with its interval and the prediction interval,
 * or the reason a prediction interval is unavailable (common-effect model; k - p - 1 < 1).
 * Throws ModelInputError for a row of the wrong length or with non-finite values.
 * Example: BCG trials, REML: predictAt(result, [1]).interval is about [-1.87, 0.44].
 */
export function predictAt(source: PredictionSource, row: ArrayLike<number>): Prediction {
  const { linearPredictor, p, k, confidenceLevel } = source;
  if (row.length !== p) throw new ModelInputError(`a prediction needs ${p} design values (${linearPredictor.columnNames.join(", ")}), got ${row.length}`);
  for (let j = 0; j < p; j += 1) {
    if (!Number.isFinite(row[j]!)) throw new ModelInputError(`prediction value for '${linearPredictor.columnNames[j]}' is not a finite number`);
  }
  const conditioned = rowToConditionedScale({ columns: p, ...linearPredictor }, row);
  let estimate = 0;
  let variance = 0;
  for (let a = 0; a < p; a += 1) {
    estimate += conditioned[a]! * linearPredictor.coefficients[a]!;
    for (let b = 0; b < p; b += 1) variance += conditioned[a]! * linearPredictor.covariance[a * p + b]! * conditioned[b]!;
  }
  const standardError = Math.sqrt(Math.max(variance, 0));
  const critical = criticalValue(confidenceLevel, source.test.test, source.test.df);
  const tau2 = source.heterogeneity.tau2;
  const df = predictionDf(k, p);
  let interval: PredictionInterval | Unavailable;
  if (source.method.method === "fe") {
    interval = { available: false, reason: "the common-effect model assumes no between-study variance, so it has no prediction interval for a new study" };
  } else if (!(df >= 1)) {
    interval = { available: false, reason: `a prediction interval uses t with k - p - 1 degrees of freedom, which needs at least ${p + 2} studies (k = ${k})` };
  } else {
    const predictionSe = Math.sqrt(tau2 + standardError * standardError);
    const t = studentTQuantile(1 - (1 - confidenceLevel) / 2, df);
    interval = { available: true, lower: estimate - t * predictionSe, upper: estimate + t * predictionSe, df, standardError: predictionSe };
  }
  return {
    available: true,
    at: Array.from(row),
    estimate,
    standardError,
    ciLower: estimate - critical * standardError,
    ciUpper: estimate + critical * standardError,
    interval,
  };
}
