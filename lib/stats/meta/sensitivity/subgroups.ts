/**
 * Subgroup analysis by a categorical column (species, habitat, region): a pooled estimate per
 * subgroup and the test of subgroup differences, with tau^2 either estimated separately in each
 * subgroup or shared by all of them.
 *
 * References:
 * - Borenstein, M., Hedges, L. V., Higgins, J. P. T. & Rothstein, H. R. (2009). Introduction to
 *   Meta-Analysis. Wiley, ch. 19 (subgroup analyses: separate and pooled tau^2, Q_between).
 * - Raudenbush, S. W. (2009). Analyzing effect sizes: random-effects models. In The Handbook of
 *   Research Synthesis and Meta-Analysis, 2nd ed., ch. 16 (the mixed-effects model, Q_M).
 *
 * separate: each subgroup is pooled on its own (its own tau^2, same method and test); the test is
 *   Q_between = sum_g (mu_g - mu_bar)^2 / SE_g^2, mu_bar the inverse-SE^2-weighted mean of the
 *   subgroup estimates, against chi-square(G - 1): Cochran's Q of the G subgroup estimates,
 *   computed by the common-effect fit of them.
 * common: one mixed-effects model with the grouping as a categorical moderator (treatment
 *   contrasts) and one tau^2; subgroup means are the model's predictions at each level, and the
 *   test is the omnibus test of the G - 1 contrasts (Q_M against chi-square(G - 1), or
 *   F(G - 1, k - G) under Knapp-Hartung).
 * A subgroup with a single estimate has no tau^2 of its own: the separate analysis refuses it,
 * naming it (merge it, drop it, or use the common tau^2); the common analysis keeps it (its mean
 * is its own estimate with SE sqrt(v + tau^2)) and warns that it adds nothing to tau^2.
 * Subgroups are listed in sorted (code unit) order.
 */
import { ModelInputError } from "../../model-error";
import { warning, type StatWarning } from "../../warnings";
import { fitMetaModel } from "../fit-meta-model";
import { metaData, type MetaData } from "../meta-data";
import { coefficientPValue } from "../meta-inference";
import type { CoefficientEstimate, MetaModelResult } from "../meta-result";
import { encodeModeratorRow, moderatorDesign } from "../moderator-design";
import { predictAt } from "../prediction-interval";
import { checkStudyNames, groupRows } from "./study-names";
import { fitSubset, type SensitivityFitOptions } from "./subset-fit";

export const SUBGROUP_TAU2 = ["separate", "common"] as const;
export type SubgroupTau2 = (typeof SUBGROUP_TAU2)[number];

export interface SubgroupOptions extends Omit<SensitivityFitOptions, "design"> {
  /** Separate tau^2 per subgroup (default) or one common tau^2. */
  tau2?: SubgroupTau2;
  /** Name of the grouping (the column), used for the moderator in the common model. Default "group". */
  name?: string;
}

/** The subgroup mean as a coefficient: estimate, SE, z or t statistic against 0, p, interval. */
export interface SubgroupEstimate extends Omit<CoefficientEstimate, "term"> {
  readonly group: string;
  /** 0-based rows of the subgroup. */
  readonly rows: readonly number[];
  readonly studies: number;
  /** The subgroup's own fit (separate tau^2), or null in the common model. */
  readonly fit: MetaModelResult | null;
}

export interface SubgroupDifferenceTest {
  readonly statistic: number;
  readonly distribution: "chi-square" | "F";
  readonly df: number;
  readonly denominatorDf: number | null;
  readonly pValue: number;
  readonly description: string;
}

export interface SubgroupResult {
  readonly tau2: SubgroupTau2;
  readonly name: string;
  readonly groups: readonly SubgroupEstimate[];
  readonly test: SubgroupDifferenceTest;
  /** All studies pooled, ignoring the subgroups. */
  readonly overall: MetaModelResult;
  /** The mixed-effects model with the subgroup moderator (common tau^2), else null. */
  readonly commonModel: MetaModelResult | null;
  readonly warnings: readonly StatWarning[];
}

const SEPARATE_DESCRIPTION =
  "Q_between: Cochran's Q of the subgroup estimates around their inverse-SE^2-weighted mean, each subgroup pooled with its own tau^2, against chi-square(G - 1) (Borenstein et al. 2009, ch. 19).";
const COMMON_DESCRIPTION =
  "Omnibus test of the subgroup contrasts in one mixed-effects model with a common tau^2: Q_M against chi-square(G - 1), or F(G - 1, k - G) under Knapp-Hartung (Raudenbush 2009).";

function separateAnalysis(data: MetaData, byGroup: [string, number[]][], options: Omit<SensitivityFitOptions, "design">): { groups: SubgroupEstimate[]; test: SubgroupDifferenceTest } {
  const singles = byGroup.filter(([, rows]) => rows.length === 1).map(([group]) => `'${group}'`);
  if (singles.length > 0) {
    throw new ModelInputError(
      `subgroup(s) ${singles.join(", ")} have a single estimate, which has no tau^2 of its own; merge or drop them, or use a common tau^2 for all subgroups`,
    );
  }
  const groups = byGroup.map(([group, rows]): SubgroupEstimate => {
    const outcome = fitSubset(data, rows, options);
    if (!outcome.available) throw new ModelInputError(`subgroup '${group}' cannot be pooled: ${outcome.reason}`);
    const { term: _term, ...pooled } = outcome.fit.coefficients[0]!;
    return { group, rows, studies: rows.length, ...pooled, fit: outcome.fit };
  });
  const between = fitMetaModel(metaData({ estimates: groups.map((g) => g.estimate), standardErrors: groups.map((g) => g.standardError) }), { method: "fe" });
  const h = between.heterogeneity;
  return { groups, test: { statistic: h.q, distribution: "chi-square", df: h.qDf, denominatorDf: null, pValue: h.qPValue, description: SEPARATE_DESCRIPTION } };
}

function commonAnalysis(data: MetaData, groupOf: readonly string[], byGroup: [string, number[]][], name: string, options: Omit<SensitivityFitOptions, "design">) {
  const moderators = moderatorDesign(data.k, [{ kind: "categorical", name, values: groupOf }]);
  const fit = fitMetaModel(data, { ...options, design: moderators.design });
  const groups = byGroup.map(([group, rows]): SubgroupEstimate => {
    const prediction = predictAt(fit, encodeModeratorRow(moderators, { [name]: group }));
    const statistic = prediction.estimate / prediction.standardError;
    return {
      group,
      rows,
      studies: rows.length,
      estimate: prediction.estimate,
      standardError: prediction.standardError,
      statistic,
      pValue: coefficientPValue(statistic, fit.test.test, fit.test.df),
      ciLower: prediction.ciLower,
      ciUpper: prediction.ciUpper,
      fit: null,
    };
  });
  const omnibus = fit.moderatorTest!;
  const test: SubgroupDifferenceTest = {
    statistic: omnibus.statistic,
    distribution: omnibus.distribution,
    df: omnibus.df,
    denominatorDf: omnibus.denominatorDf,
    pValue: omnibus.pValue,
    description: COMMON_DESCRIPTION,
  };
  return { fit, groups, test };
}

/**
 * Pools each subgroup of `data` (one group name per study in `groupOf`) and tests the differences.
 * Constraints: one non-empty group name per study, at least two subgroups; with separate tau^2,
 * every subgroup needs at least two estimates (and must itself be fittable).
 * Returns the subgroup estimates (sorted by name), the difference test, the overall fit and, with
 * a common tau^2, the mixed-effects model.
 * Throws ModelInputError naming the subgroup(s) that cannot be pooled, or for fewer than two
 * subgroups.
 * Example: subgroupAnalysis(data, species, { tau2: "common", name: "species" }).test.pValue.
 */
export function subgroupAnalysis(data: MetaData, groupOf: readonly string[], options: SubgroupOptions = {}): SubgroupResult {
  const { tau2 = "separate", name = "group", ...fitOptions } = options;
  if (!SUBGROUP_TAU2.includes(tau2)) throw new ModelInputError(`tau2 must be 'separate' or 'common', got '${tau2}'`);
  checkStudyNames(data.k, groupOf, "group names");
  const byGroup = groupRows(groupOf);
  if (byGroup.length < 2) throw new ModelInputError(`a subgroup analysis needs at least two subgroups; every study is in '${byGroup[0]?.[0]}'`);
  const overall = fitMetaModel(data, fitOptions);
  const warnings: StatWarning[] = [];
  if (tau2 === "separate") {
    const { groups, test } = separateAnalysis(data, byGroup, fitOptions);
    for (const g of groups) {
      for (const w of g.fit!.warnings) warnings.push(warning(w.code, `subgroup '${g.group}': ${w.message}`));
    }
    return Object.freeze({ tau2, name, groups: Object.freeze(groups), test, overall, commonModel: null, warnings });
  }
  const { fit, groups, test } = commonAnalysis(data, groupOf, byGroup, name, fitOptions);
  const singles = groups.filter((g) => g.studies === 1).map((g) => `'${g.group}'`);
  if (singles.length > 0) {
    warnings.push(warning("few_studies", `subgroup(s) ${singles.join(", ")} have a single estimate: the subgroup mean is that estimate, and it adds nothing to the estimate of tau^2`));
  }
  warnings.push(...fit.warnings);
  return Object.freeze({ tau2, name, groups: Object.freeze(groups), test, overall, commonModel: fit, warnings });
}
