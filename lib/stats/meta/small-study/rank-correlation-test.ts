/**
 * Begg and Mazumdar's rank correlation test for funnel-plot asymmetry: Kendall's tau between the
 * standardized deviates of the estimates from the common-effect estimate and their variances.
 *
 * References:
 * - Begg, C. B. & Mazumdar, M. (1994). Operating characteristics of a rank correlation test for
 *   publication bias. Biometrics 50: 1088-1101.
 *
 * theta = sum(y_i / v_i) / sum(1 / v_i) (common effect), v*_i = v_i - 1 / sum(1 / v_j) (the
 * variance of y_i - theta), t*_i = (y_i - theta) / sqrt(v*_i); the test is Kendall's tau of
 * (t*_i, v_i). The p-value reported is the normal approximation Begg and Mazumdar used (score
 * variance corrected for ties, no continuity correction); the exact permutation p-value is given
 * beside it when there are no ties and k < 50.
 */
import type { MetaData } from "../meta-data";
import { ModelInputError } from "../../model-error";
import { requireOneRowPerStudy } from "../sensitivity/subset-fit";
import { kendallCorrelation, type KendallCorrelation } from "./kendall-tau";

export interface RankCorrelationTest {
  readonly available: true;
  readonly k: number;
  /** The common-effect estimate the deviates are taken from. */
  readonly commonEffect: number;
  /** t*_i, one per study. */
  readonly standardizedDeviates: readonly number[];
  readonly correlation: KendallCorrelation;
  readonly description: string;
  readonly references: readonly string[];
}

/**
 * Runs the test on `data`.
 * Constraints: k >= 3 studies without case weights, not all variances equal.
 * Returns Kendall's tau-b of (t*, v) with the normal-approximation p (and the exact p where
 * defined). Throws ModelInputError for fewer than three studies, case weights or equal variances.
 * Example: rankCorrelationTest(data).correlation.pValue.
 */
export function rankCorrelationTest(data: MetaData): RankCorrelationTest {
  requireOneRowPerStudy(data, "the rank correlation test");
  const { k, estimates, variances } = data;
  if (k < 3) throw new ModelInputError(`the rank correlation test needs at least 3 studies (k = ${k})`);
  let sumWeights = 0;
  let weightedSum = 0;
  for (let i = 0; i < k; i += 1) {
    sumWeights += 1 / variances[i]!;
    weightedSum += estimates[i]! / variances[i]!;
  }
  const commonEffect = weightedSum / sumWeights;
  const pooledVariance = 1 / sumWeights;
  const standardizedDeviates = Array.from(estimates, (y, i) => (y - commonEffect) / Math.sqrt(variances[i]! - pooledVariance));
  if (variances.every((v) => v === variances[0])) {
    throw new ModelInputError("the rank correlation test needs studies of different precision: every variance is the same");
  }
  return Object.freeze({
    available: true as const,
    k,
    commonEffect,
    standardizedDeviates,
    correlation: kendallCorrelation(standardizedDeviates, variances),
    description:
      "Kendall's tau-b between the standardized deviates (y_i - theta) / sqrt(v_i - 1 / sum(1/v)) from the common-effect estimate theta and the variances v_i; p-value by the normal approximation (ties corrected, no continuity correction).",
    references: ["Begg, C. B. & Mazumdar, M. (1994). Biometrics 50: 1088-1101."],
  });
}
