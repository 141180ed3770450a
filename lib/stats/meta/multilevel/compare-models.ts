/**
 * The likelihood-ratio test between two nested multilevel fits of the same estimates: a reduced
 * model that drops grouping levels and/or moderators of a full model.
 *
 * References:
 * - Self, S. G. & Liang, K.-Y. (1987). Journal of the American Statistical Association 82:
 *   605-610 (a parameter on the boundary under the null: mixtures of chi-square distributions).
 * - Stram, D. O. & Lee, J. W. (1994). Biometrics 50: 1171-1177 (one variance component tested at
 *   0, together with q unconstrained parameters: 50:50 mixture of chi2_q and chi2_{q+1}).
 * - Verbeke, G. & Molenberghs, G. (2000). Linear Mixed Models for Longitudinal Data. Springer,
 *   section 6.2 (restricted likelihoods compare only models with the same fixed effects).
 *
 * T = 2 (l_full - l_reduced). With q moderator coefficients dropped and no level dropped, T is
 * chi2_q under the null. With one level dropped (its variance tested at the boundary 0) and q
 * coefficients, the null distribution is the 50:50 mixture of chi2_q and chi2_{q+1}:
 * p = [P(chi2_q >= T) + P(chi2_{q+1} >= T)] / 2, with P(chi2_0 >= T) = 1 for T = 0 and 0 for T > 0.
 * Dropping two or more levels at once gives a mixture whose weights depend on the information
 * matrix; that is refused (test one level at a time). Under REML the moderators must be the same.
 */
import { chiSquareUpperP } from "../../distributions/chi-square";
import { ModelInputError } from "../../model-error";
import type { MetaModelResult } from "../meta-result";

export interface NestedModelComparison {
  readonly statistic: number;
  /** Number of moderator coefficients dropped. */
  readonly droppedCoefficients: number;
  /** The grouping levels dropped (at most one). */
  readonly droppedLevels: readonly string[];
  readonly distribution: string;
  readonly pValue: number;
  /** P(chi2 with all dropped parameters as df >= T): the test that ignores the boundary, for comparison. */
  readonly naivePValue: number;
  readonly description: string;
}

function upperTail(statistic: number, df: number): number {
  if (df === 0) return statistic > 0 ? 0 : 1;
  return statistic > 0 ? chiSquareUpperP(statistic, df) : 1;
}

/**
 * Compares `full` with `reduced`, two fitMultilevelModel results on the same estimates.
 * Constraints: same estimates (k), same method; the reduced levels a subsequence of the full ones
 * with at most one dropped; the reduced coefficients a subset of the full ones (equal under REML);
 * at least one level or coefficient dropped.
 * Returns T, the distribution used and its p-value. Throws ModelInputError naming the violated
 * condition.
 * Example: compareNestedModels(fit(species / site / year), fit(species / year)) tests the site
 * variance with the 50:50 mixture of chi2_0 and chi2_1.
 */
export function compareNestedModels(full: MetaModelResult, reduced: MetaModelResult): NestedModelComparison {
  if (!full.multilevel || !reduced.multilevel) throw new ModelInputError("both fits must be multilevel models (fitMultilevelModel)");
  if (full.k !== reduced.k) throw new ModelInputError(`the fits are of different numbers of estimates (${full.k} and ${reduced.k})`);
  if (full.method.method !== reduced.method.method) throw new ModelInputError(`the fits use different methods (${full.method.method} and ${reduced.method.method})`);
  if (!full.fit.converged || !reduced.fit.converged) throw new ModelInputError("both fits must have converged");
  const fullLevels = full.multilevel.components.map((c) => c.level);
  const reducedLevels = reduced.multilevel.components.map((c) => c.level);
  let position = 0;
  for (const level of reducedLevels) {
    position = fullLevels.indexOf(level, position);
    if (position < 0) throw new ModelInputError(`level '${level}' of the reduced model is not a level of the full model (in the same order)`);
    position += 1;
  }
  const droppedLevels = fullLevels.filter((level) => !reducedLevels.includes(level));
  if (droppedLevels.length > 1) {
    throw new ModelInputError(
      `the reduced model drops ${droppedLevels.length} levels (${droppedLevels.join(", ")}); with several variances on the boundary the null distribution depends on the information matrix, so compare one level at a time`,
    );
  }
  const fullTerms = full.coefficients.map((c) => c.term);
  const reducedTerms = reduced.coefficients.map((c) => c.term);
  const foreign = reducedTerms.find((term) => !fullTerms.includes(term));
  if (foreign !== undefined) throw new ModelInputError(`coefficient '${foreign}' of the reduced model is not in the full model`);
  const droppedCoefficients = fullTerms.length - reducedTerms.length;
  if (full.method.method === "reml" && droppedCoefficients > 0) {
    throw new ModelInputError("restricted likelihoods of models with different moderators are not comparable; refit both by ML to test moderators");
  }
  if (droppedCoefficients === 0 && droppedLevels.length === 0) throw new ModelInputError("the reduced model drops neither a level nor a coefficient");
  const statistic = Math.max(0, 2 * (full.fit.logLikelihood - reduced.fit.logLikelihood));
  const q = droppedCoefficients;
  if (droppedLevels.length === 0) {
    const pValue = upperTail(statistic, q);
    return { statistic, droppedCoefficients, droppedLevels, distribution: `chi2_${q}`, pValue, naivePValue: pValue, description: `likelihood-ratio test of ${q} moderator coefficient${q === 1 ? "" : "s"}: chi-square on ${q} df` };
  }
  return {
    statistic,
    droppedCoefficients,
    droppedLevels,
    distribution: `50:50 mixture of chi2_${q} and chi2_${q + 1}`,
    pValue: 0.5 * (upperTail(statistic, q) + upperTail(statistic, q + 1)),
    naivePValue: upperTail(statistic, q + 1),
    description: `likelihood-ratio test of the variance at level '${droppedLevels[0]}' (on its boundary 0${q > 0 ? ` with ${q} moderator coefficient${q === 1 ? "" : "s"}` : ""}): 50:50 mixture of chi2_${q} and chi2_${q + 1} (Self & Liang 1987; Stram & Lee 1994)`,
  };
}
