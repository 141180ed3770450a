/**
 * The coordinates of Baujat's plot: each study's contribution to the heterogeneity statistic Q
 * against its influence on the pooled result, both from common-effect (inverse-variance) fits.
 *
 * References:
 * - Baujat, B., Mahe, C., Pignon, J.-P. & Hill, C. (2002). A graphical method for exploring
 *   heterogeneity in meta-analyses: application to a meta-analysis of 65 trials. Statistics in
 *   Medicine 21: 2641-2652.
 *
 * Baujat et al. (intercept-only, common effect theta with all studies, theta_(i) without study i):
 *   contribution to Q:  (y_i - theta)^2 / v_i        (these sum to Cochran's Q),
 *   influence:          (theta - theta_(i))^2 / Var(theta_(i)).
 * With moderators (our generalisation, stated as such): the contribution is w_i e_i^2, w_i = 1/v_i,
 * e_i the common-effect meta-regression residual (summing to Q_E), and the influence uses the
 * fitted values at the study's own moderator values,
 *   (x_i' b - x_i' b_(i))^2 / (x_i' Cov(b_(i)) x_i),
 * which is Baujat's quantity when the design is the intercept alone.
 */
import type { MetaData } from "../meta-data";
import type { MetaModelResult } from "../meta-result";
import type { DeletionRefit } from "./deletion-refits";

export interface BaujatPoint {
  readonly label: string;
  /** w_i e_i^2 in the common-effect fit of all studies (case weight included). */
  readonly contributionToQ: number;
  /** Squared standardized change of the fitted value at the study when it is left out. */
  readonly influenceOnEstimate: number | null;
  /** Why the influence is missing (the refit without the study could not be computed). */
  readonly note: string | null;
}

export interface BaujatCoordinates {
  /** The common-effect fit of all studies both axes refer to. */
  readonly commonEffect: MetaModelResult;
  readonly points: readonly BaujatPoint[];
  readonly description: string;
}

export const BAUJAT_DESCRIPTION =
  "Baujat et al. (2002): x = the study's contribution to Q in the common-effect fit, (y_i - fitted_i)^2 / v_i; y = its influence on the pooled result, the squared change of the common-effect fitted value at the study when it is left out, divided by the variance of the refitted value. With moderators the same quantities at the study's moderator values (a generalisation).";

/**
 * Builds the points from the common-effect fit of all studies and its deletion refits (one per
 * study, from deletionRefits). Returns the frozen points; a study whose refit cannot be computed
 * has a null influence and the reason in `note`.
 * Example: BCG trials: the contributions sum to Cochran's Q = 152.23.
 */
export function baujatCoordinates(data: MetaData, commonEffect: MetaModelResult, deletions: readonly DeletionRefit[], labels: readonly string[]): BaujatCoordinates {
  const points: BaujatPoint[] = [];
  for (let i = 0; i < data.k; i += 1) {
    const residual = commonEffect.studies.residuals[i]!;
    const caseWeight = data.caseWeights === null ? 1 : data.caseWeights[i]!;
    const contributionToQ = (caseWeight * residual * residual) / data.variances[i]!;
    const deletion = deletions[i]!;
    if (!deletion.available) {
      points.push({ label: labels[i]!, contributionToQ, influenceOnEstimate: null, note: `no refit without this study: ${deletion.reason}` });
      continue;
    }
    const { fitted, fittedDeleted, varianceDeleted } = deletion.comparison;
    points.push({ label: labels[i]!, contributionToQ, influenceOnEstimate: (fitted - fittedDeleted) ** 2 / varianceDeleted, note: null });
  }
  return Object.freeze({ commonEffect, points: Object.freeze(points), description: BAUJAT_DESCRIPTION });
}
