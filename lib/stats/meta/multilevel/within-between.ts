/**
 * Are between-year effects of mismatch weaker than within-year effects across the network?
 * Each site contributes a within-year estimate (females of one year compared with each other) and a
 * between-year estimate (year means compared across years) of the same selection on mismatch. The
 * model: estimate level (within, between) as a moderator, a random intercept per site (the two
 * estimates of a site share the site's circumstances) and a random effect per estimate, fitted by
 * fitMultilevelModel, with CR2 inference clustered by site by default.
 *
 * References:
 * - van de Pol, M. & Wright, J. (2009). A simple method for distinguishing within- versus
 *   between-subject effects using mixed models. Animal Behaviour 77: 753-758.
 * - Konstantopoulos, S. (2011). Research Synthesis Methods 2: 61-76 (the multilevel model).
 * - Tipton, E. (2015). Psychological Methods 20: 375-393 (CR2 by site).
 *
 * The answer: with d = mean(between) - mean(within), the between-year effect is "weaker" when d
 * moves it towards zero from the within-year mean, i.e. when the interval of -sign(within) d lies
 * above 0; "stronger" when it lies below 0; "no clear difference" otherwise; "undetermined" when
 * the within-year mean itself is not distinguishable from 0 (then "weaker" has no direction).
 * "Towards zero" includes crossing it: a between-year mean of the opposite sign counts as weaker.
 *
 * The same model from the command line:
 *   pool FILE.csv --estimate y --se se --moderator estimate_level --reference estimate_level=within
 *     --level site --level estimate_id --cluster site
 * (estimate_id: a column with a distinct value per row.)
 */
import { criticalValue, coefficientPValue } from "../meta-inference";
import type { MetaData } from "../meta-data";
import type { MetaModelResult } from "../meta-result";
import { moderatorDesign } from "../moderator-design";
import { StudyInputError } from "../meta-data";
import { fitMultilevelModel, type MultilevelMethod } from "./fit-multilevel-model";

export interface WithinBetweenInput {
  /** The estimate level of each estimate: `withinLabel` or `betweenLabel`. */
  readonly estimateLevel: readonly string[];
  /** The site of each estimate. */
  readonly site: readonly string[];
  /** Default "within". */
  readonly withinLabel?: string;
  /** Default "between". */
  readonly betweenLabel?: string;
  /** Default "reml". */
  readonly method?: MultilevelMethod;
  /** Default 0.95. */
  readonly confidenceLevel?: number;
  /** CR2 inference clustered by site (default true); false uses the model-based z tests. */
  readonly robust?: boolean;
}

export interface MeanEffect {
  readonly estimate: number;
  readonly standardError: number;
  readonly ciLower: number;
  readonly ciUpper: number;
}

export interface WithinBetweenComparison {
  readonly fit: MetaModelResult;
  /** Model-based means of the two estimate levels. */
  readonly within: MeanEffect;
  readonly between: MeanEffect;
  /** mean(between) - mean(within), with the inference named in `inference`. */
  readonly difference: MeanEffect & { readonly statistic: number; readonly pValue: number; readonly df: number | null };
  readonly inference: "CR2 by site (t, Satterthwaite df)" | "model-based (Wald z)";
  readonly answer: "weaker" | "stronger" | "no clear difference" | "undetermined";
  readonly explanation: string;
}

function threeDigits(value: number): string {
  return Number(value.toPrecision(3)).toString();
}

/**
 * Fits the within- versus between-year model to `data` and answers the question.
 * Constraints: k labels per input; every estimate level one of the two labels, both present;
 * sites holding more than one estimate (otherwise the site and estimate levels coincide).
 * Returns the fit, the two means, their difference and the answer in words.
 * Throws StudyInputError for unknown estimate levels or a single level; whatever
 * fitMultilevelModel throws otherwise.
 * Example: compareWithinBetween(data, { estimateLevel: ["within", "between", ...], site }).answer.
 */
export function compareWithinBetween(data: MetaData, input: WithinBetweenInput): WithinBetweenComparison {
  const withinLabel = input.withinLabel ?? "within";
  const betweenLabel = input.betweenLabel ?? "between";
  const confidenceLevel = input.confidenceLevel ?? 0.95;
  input.estimateLevel.forEach((label, i) => {
    if (label !== withinLabel && label !== betweenLabel) {
      throw new StudyInputError(`estimate ${i + 1}: estimate level '${label}' is neither '${withinLabel}' nor '${betweenLabel}'`, "estimate_level", i);
    }
  });
  const moderators = moderatorDesign(data.k, [{ kind: "categorical", name: "estimate_level", values: input.estimateLevel, reference: withinLabel }]);
  const fit = fitMultilevelModel(data, {
    levels: [
      { name: "site", values: input.site },
      { name: "estimate", values: Array.from({ length: data.k }, (_, i) => String(i + 1)) },
    ],
    method: input.method,
    design: moderators.design,
    confidenceLevel,
    cluster: input.robust ?? true ? { name: "site", labels: input.site } : undefined,
  });
  const critical = criticalValue(confidenceLevel, "z", null);
  const [intercept, contrast] = fit.coefficients as [(typeof fit.coefficients)[0], (typeof fit.coefficients)[0]];
  const covariance = fit.coefficientCovariance;
  const mean = (estimate: number, variance: number): MeanEffect => {
    const standardError = Math.sqrt(variance);
    return { estimate, standardError, ciLower: estimate - critical * standardError, ciUpper: estimate + critical * standardError };
  };
  const within = mean(intercept.estimate, covariance[0]!);
  const between = mean(intercept.estimate + contrast.estimate, covariance[0]! + covariance[3]! + 2 * covariance[1]!);
  const robust = fit.robust;
  const source = robust ? robust.coefficients : null;
  const difference = source
    ? { estimate: source[1]!.estimate, standardError: source[1]!.standardError, ciLower: source[1]!.ciLower, ciUpper: source[1]!.ciUpper, statistic: source[1]!.statistic, pValue: source[1]!.pValue, df: source[1]!.df }
    : { estimate: contrast.estimate, standardError: contrast.standardError, ciLower: contrast.ciLower, ciUpper: contrast.ciUpper, statistic: contrast.statistic, pValue: coefficientPValue(contrast.statistic, "z", null), df: null };
  const withinInterval = source ? [source[0]!.ciLower, source[0]!.ciUpper] : [within.ciLower, within.ciUpper];
  const level = `${Math.round(confidenceLevel * 1000) / 10}%`;
  let answer: WithinBetweenComparison["answer"];
  let explanation: string;
  if (withinInterval[0]! <= 0 && withinInterval[1]! >= 0) {
    answer = "undetermined";
    explanation = `the within-year mean effect ${threeDigits(within.estimate)} (${level} CI [${threeDigits(withinInterval[0]!)}, ${threeDigits(withinInterval[1]!)}]) is not distinguishable from 0, so whether between-year effects are weaker has no direction; difference between - within ${threeDigits(difference.estimate)}`;
  } else {
    const sign = Math.sign(within.estimate);
    const shrinkLower = -sign * (sign > 0 ? difference.ciUpper : difference.ciLower);
    const shrinkUpper = -sign * (sign > 0 ? difference.ciLower : difference.ciUpper);
    answer = shrinkLower > 0 ? "weaker" : shrinkUpper < 0 ? "stronger" : "no clear difference";
    const verdict =
      answer === "weaker"
        ? "between-year effects are weaker (closer to zero) than within-year effects"
        : answer === "stronger"
          ? "between-year effects are stronger (further from zero) than within-year effects"
          : "the data do not distinguish between-year from within-year effects";
    explanation = `${verdict}: within-year mean ${threeDigits(within.estimate)}, between-year mean ${threeDigits(between.estimate)}, difference ${threeDigits(difference.estimate)} (${level} CI [${threeDigits(difference.ciLower)}, ${threeDigits(difference.ciUpper)}], p = ${threeDigits(difference.pValue)}${difference.df === null ? ", Wald z" : `, CR2 t on ${threeDigits(difference.df)} df`})`;
  }
  return { fit, within, between, difference, inference: source ? "CR2 by site (t, Satterthwaite df)" : "model-based (Wald z)", answer, explanation };
}
