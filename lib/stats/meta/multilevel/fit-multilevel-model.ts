/**
 * Fits a multilevel random-effects meta-analysis or meta-regression: nested random intercepts at
 * any number of levels named by grouping columns (e.g. species / site / site-year), fixed effects
 * from the moderator design, variance components by REML (default) or ML. Returns the engine's
 * MetaModelResult with its `multilevel` part (and `robust` when clusters are given).
 *
 * References:
 * - Konstantopoulos, S. (2011). Fixed effects and variance components estimation in three-level
 *   meta-analysis. Research Synthesis Methods 2: 61-76.
 * - Harville, D. A. (1977). Journal of the American Statistical Association 72: 320-338.
 * - Nakagawa, S. & Santos, E. S. A. (2012). Methodological issues and advances in biological
 *   meta-analysis. Evolutionary Ecology 26: 1253-1274 (I^2 per level: sigma2_l over the total
 *   variance sum sigma2 + s^2, s^2 the typical within-study variance of Higgins & Thompson 2002).
 * - Cheung, M. W.-L. (2014). Psychological Methods 19: 211-229 (level-2 and level-3 I^2).
 * - Higgins, J. P. T. & Thompson, S. G. (2002). Statistics in Medicine 21: 1539-1558.
 * - Burnham, K. P. & Anderson, D. R. (2002). Model Selection and Multimodel Inference, 2nd ed.
 *   Springer (AIC); Schwarz, G. (1978). Annals of Statistics 6: 461-464 (BIC).
 * - Verbeke, G. & Molenberghs, G. (2000). Linear Mixed Models for Longitudinal Data. Springer,
 *   section 6.4 (information criteria under REML use n = k - p; only models with the same fixed
 *   effects compare).
 *
 * Methods of the steps: nested-likelihood.ts (likelihood and score in O(k)),
 * variance-components-estimate.ts (the optimiser), profile-likelihood-interval.ts (intervals,
 * boundary tests, standard errors), robust/ (CR2). Fixed effects: generalised least squares at the
 * estimated components with Wald z tests. With moderators, s^2 and I^2 are residual, with
 * s^2 = (k - p) / tr P(0) as in heterogeneity.ts (Higgins & Thompson's s^2 when p = 1).
 * The prediction interval is for a new estimate in a new group at every level: the engine's
 * prediction-interval.ts with tau^2 = the sum of the components and t on k - p - 1 df (our
 * convention, carried over from the single-level model; with many estimates it is close to the
 * normal quantile). Intervals, tests and component SEs are withheld (with the reason) when the
 * optimiser did not converge.
 */
import { interceptOnly, type DesignMatrix } from "../../linear/design-matrix";
import { ModelInputError } from "../../model-error";
import { warning, type StatWarning } from "../../warnings";
import { chiSquareUpperP } from "../../distributions/chi-square";
import { coefficientsToOriginalScale, conditionDesign, covarianceToOriginalScale, ILL_CONDITIONED_PIVOT } from "../design-conditioning";
import { checkDesign, freeze, resolveControl } from "../fit-meta-model";
import { h2Ratio, i2Percent, typicalWithinStudyVariance } from "../heterogeneity";
import type { MetaData } from "../meta-data";
import { coefficientPValue, criticalValue, TEST_DESCRIPTIONS, waldStatistic } from "../meta-inference";
import type { CoefficientEstimate, MetaModelResult, Prediction, Unavailable } from "../meta-result";
import { predictAt } from "../prediction-interval";
import type { MethodDescription } from "../tau2-estimator";
import { WeightedFit, WITH_TRACE } from "../weighted-fit";
import { clusterRows, robustInference, type ClusterSpec } from "../robust/cluster-robust-inference";
import type { ClusterRobustInference } from "../robust/cluster-robust-result";
import type { InformationCriteria, MultilevelSummary, VarianceComponent, VarianceComponentInterval } from "./multilevel-result";
import { nestedLevels, type LevelSpec, type NestedLevels } from "./nested-levels";
import { NestedLikelihood, WITH_SCORE, type LikelihoodKind } from "./nested-likelihood";
import { BOUNDARY_TEST_DESCRIPTION, boundaryTest, logLikelihoodWithout, observedInformationStandardErrors, PROFILE_DESCRIPTION, profileLimits } from "./profile-likelihood-interval";
import { maximiseLikelihood } from "./variance-components-estimate";

export const MULTILEVEL_METHODS = ["reml", "ml"] as const;
export type MultilevelMethod = (typeof MULTILEVEL_METHODS)[number];

export interface MultilevelModelOptions {
  /** Grouping levels, outermost first (e.g. species, site, site-year). At least one. */
  levels: readonly LevelSpec[];
  /** Default "reml". */
  method?: MultilevelMethod;
  /** Design with one row per estimate (moderator-design.ts). Default: intercept only. */
  design?: DesignMatrix;
  /** Level of every interval. Default 0.95. */
  confidenceLevel?: number;
  /** Iteration limit of the optimiser and of each profile root. Default 1000. */
  maxIterations?: number;
  /** Relative step tolerance of the optimiser. Default 1e-10. */
  tolerance?: number;
  /** Design row for the prediction (user's coding). Default [1] for the intercept-only model. */
  predictAt?: ArrayLike<number>;
  /** Profile-likelihood intervals of the variance components. Default true. */
  profileIntervals?: boolean;
  /** Cluster-robust (CR2) inference with these clusters; each outermost group must lie in one cluster. */
  cluster?: ClusterSpec;
}

const FEW_GROUPS = 5;

export const I2_DESCRIPTION =
  "I^2 per level (Nakagawa & Santos 2012; Cheung 2014): 100 sigma2_l / (sum of the variance components + s^2), with s^2 the typical within-study variance of Higgins & Thompson (2002), residual (k - p) / tr P(0) with moderators.";

const METHOD_DESCRIPTIONS: Readonly<Record<MultilevelMethod, MethodDescription>> = {
  reml: {
    method: "reml",
    name: "restricted maximum likelihood (multilevel)",
    description:
      "Variance components of nested random intercepts maximising the restricted likelihood; average-information Newton steps with step-halving, each variance >= 0; fixed effects by generalised least squares.",
    references: [
      "Harville, D. A. (1977). Journal of the American Statistical Association 72: 320-338.",
      "Gilmour, A. R., Thompson, R. & Cullis, B. R. (1995). Biometrics 51: 1440-1450.",
      "Konstantopoulos, S. (2011). Research Synthesis Methods 2: 61-76.",
    ],
  },
  ml: {
    method: "ml",
    name: "maximum likelihood (multilevel)",
    description:
      "Variance components of nested random intercepts maximising the likelihood; average-information Newton steps with step-halving, each variance >= 0; fixed effects by generalised least squares.",
    references: [
      "Harville, D. A. (1977). Journal of the American Statistical Association 72: 320-338.",
      "Gilmour, A. R., Thompson, R. & Cullis, B. R. (1995). Biometrics 51: 1440-1450.",
      "Konstantopoulos, S. (2011). Research Synthesis Methods 2: 61-76.",
    ],
  },
};

function informationCriteria(kind: LikelihoodKind, logLikelihood: number, k: number, p: number, depth: number): InformationCriteria {
  const parameters = p + depth;
  const n = kind === "ml" ? k : k - p;
  return {
    parameters,
    n,
    aic: -2 * logLikelihood + 2 * parameters,
    bic: -2 * logLikelihood + Math.log(n) * parameters,
    description:
      kind === "ml"
        ? "AIC = -2 logL + 2 (p + L), BIC = -2 logL + log(k) (p + L), from the maximised likelihood."
        : "AIC = -2 logL_R + 2 (p + L), BIC = -2 logL_R + log(k - p) (p + L), from the restricted likelihood: compare only models with the same moderators (Verbeke & Molenberghs 2000, 6.4).",
  };
}

/** Phi_j of a cluster: diag(v) + sum_l sigma2_l [same group at level l]. */
function nestedCovariance(levels: NestedLevels, variances: Float64Array, sigma2: Float64Array): (rows: Int32Array) => Float64Array {
  return (rows) => {
    const n = rows.length;
    const phi = new Float64Array(n * n);
    for (let a = 0; a < n; a += 1) {
      for (let b = 0; b <= a; b += 1) {
        let value = a === b ? variances[rows[a]!]! : 0;
        for (let l = 0; l < sigma2.length; l += 1) {
          const groups = levels.rowGroups[l]!;
          if (groups[rows[a]!] === groups[rows[b]!]) value += sigma2[l]!;
        }
        phi[a * n + b] = value;
        phi[b * n + a] = value;
      }
    }
    return phi;
  };
}

/**
 * Fits the model to `data` (from metaData()).
 * Constraints: no case weights; k > p + L - 1 and k >= 2; levels as in nestedLevels(); a full-rank
 * design; options as documented on MultilevelModelOptions.
 * Returns the frozen MetaModelResult: coefficients with Wald z tests, heterogeneity (tau2 = the sum
 * of the components, Cochran's Q), the multilevel summary (components with profile intervals,
 * per-level I^2, boundary tests, AIC/BIC), diagnostics per estimate, fit information, warnings, and
 * `robust` with clusters.
 * Throws ModelInputError (StudyInputError for bad labels) for every input it cannot fit.
 * Example: fitMultilevelModel(data, { levels: [{ name: "site", values: sites }, { name: "estimate", values: ids }] })
 * .multilevel.components[0].sigma2 is the between-site variance.
 */
export function fitMultilevelModel(data: MetaData, options: MultilevelModelOptions): MetaModelResult {
  const method = options.method ?? "reml";
  if (!MULTILEVEL_METHODS.includes(method)) throw new ModelInputError(`a multilevel model is fitted by ${MULTILEVEL_METHODS.join(" or ")}, not '${method}'`);
  const confidenceLevel = options.confidenceLevel ?? 0.95;
  if (!(confidenceLevel > 0 && confidenceLevel < 1)) throw new ModelInputError(`confidence level must lie in (0, 1), got ${confidenceLevel}`);
  const control = resolveControl(options);
  if (data.caseWeights !== null) throw new ModelInputError("case weights are not supported in multilevel models: give every estimate its own row");
  const design = options.design ?? interceptOnly(data.k);
  checkDesign(data, design);
  const levels = nestedLevels(data.k, options.levels);
  const depth = levels.names.length;
  const { k } = data;
  const p = design.columns;
  if (k - p < depth) throw new ModelInputError(`${k} estimates cannot support ${p} coefficients and ${depth} variance components: k - p must be at least the number of levels`);
  const warnings: StatWarning[] = [];
  const conditioning = conditionDesign(design);
  if (conditioning.smallestPivotRatio < ILL_CONDITIONED_PIVOT) {
    warnings.push(warning("ill_conditioned_design", `the moderators are nearly collinear (smallest pivot ratio ${conditioning.smallestPivotRatio.toExponential(2)}); their coefficients are poorly determined`));
  }

  // Cochran's Q (Q_E with moderators) and s^2 at sigma2 = 0, from the single-level engine.
  const single = new WeightedFit({ k, p, effectiveK: k, estimates: data.estimates, variances: data.variances, caseWeights: null, design: conditioning.data, logDetGram: conditioning.logDetGram });
  single.evaluate(0, WITH_TRACE);
  const qAtZero = single.q;
  const qDf = k - p;
  const typicalVariance = typicalWithinStudyVariance(k, p, single.traceP);
  const momentTau2 = Math.max(0, (qAtZero - qDf) / single.traceP);

  const work = new NestedLikelihood({ k, p, estimates: data.estimates, variances: data.variances, design: conditioning.data, logDetGram: conditioning.logDetGram, levels });
  const start = new Float64Array(depth).fill(Math.max(momentTau2, 0.05 * typicalVariance) / depth);
  const fitted = maximiseLikelihood(work, method, start, control);
  const sigma2 = fitted.sigma2;
  const maximum = fitted.logLikelihood;
  if (!fitted.converged) {
    warnings.push(warning("non_convergence", `${METHOD_DESCRIPTIONS[method].name}: the variance components did not converge after ${fitted.iterations} steps (${fitted.failure}); the estimates below use the last values`));
  }
  // Everything read from the workspace at the estimate, before the profiles move it.
  work.evaluate(sigma2, method, WITH_SCORE);
  const gamma = work.conditionedCoefficients();
  const conditionedCovariance = Float64Array.from(work.inverse);
  const rows = work.inverseTimesDesignRows();

  // Intervals, tests and standard errors describe the maximum; from a point that is not one they would mislead.
  const standardErrors = fitted.converged ? observedInformationStandardErrors(work, method, sigma2) : new Array<number | null>(depth).fill(null);
  const notConverged: Unavailable = { available: false, reason: "the variance components did not converge, so there is no maximum to measure from" };
  const totalSigma2 = sigma2.reduce((sum, s) => sum + s, 0);
  const components: VarianceComponent[] = levels.names.map((level, l) => {
    const value = sigma2[l]!;
    let interval: VarianceComponentInterval | Unavailable = fitted.converged ? { available: false, reason: "profile-likelihood intervals were not asked for" } : notConverged;
    let atZero: { logLikelihood: number; converged: boolean } | null = null;
    if ((options.profileIntervals ?? true) && fitted.converged) {
      const scale = standardErrors[l] ?? (value > 0 ? value : typicalVariance);
      const limits = profileLimits(work, method, sigma2, maximum, l, confidenceLevel, scale, control);
      atZero = { logLikelihood: limits.logLikelihoodAtZero, converged: limits.zeroConverged };
      if (limits.converged) {
        interval = { available: true, method: "profile-likelihood", description: PROFILE_DESCRIPTION, level: confidenceLevel, lower: limits.lower, upper: limits.upper, lowerAtZero: limits.lowerAtZero };
      } else {
        interval = { available: false, reason: limits.failure ?? "the profile-likelihood limits did not converge" };
        warnings.push(warning("interval_unavailable", `no profile-likelihood interval for the variance at level '${level}': ${interval.reason}`));
      }
    }
    if (fitted.converged && (atZero === null || !atZero.converged)) atZero = value > 0 ? logLikelihoodWithout(work, method, sigma2, l, control) : { logLikelihood: maximum, converged: true };
    const test = !fitted.converged
      ? notConverged
      : atZero!.converged
      ? { available: true as const, ...boundaryTest(maximum, atZero!.logLikelihood), distribution: "50:50 mixture of chi2_0 and chi2_1" as const, description: BOUNDARY_TEST_DESCRIPTION }
      : { available: false as const, reason: "the fit without this level did not converge" };
    if (value === 0) {
      warnings.push(warning("boundary_variance_component", `the variance at level '${level}' is estimated as 0 (the boundary of its range): this level adds no variance beyond the others`));
    }
    if (levels.groupCounts[l]! < FEW_GROUPS) {
      warnings.push(warning("few_clusters", `level '${level}' has only ${levels.groupCounts[l]} groups, so its variance is very imprecise (common practice: treat fewer than ${FEW_GROUPS} groups with caution); see its profile-likelihood interval`));
    }
    return {
      level,
      groups: levels.groupCounts[l]!,
      sigma2: value,
      sigma: Math.sqrt(value),
      standardError: standardErrors[l]!,
      interval,
      i2: (100 * value) / (totalSigma2 + typicalVariance),
      atBoundary: value === 0,
      test,
    };
  });
  const multilevel: MultilevelSummary = {
    components,
    totalSigma2,
    totalI2: i2Percent(totalSigma2, typicalVariance),
    typicalWithinStudyVariance: typicalVariance,
    i2Description: I2_DESCRIPTION,
    informationCriteria: informationCriteria(method, maximum, k, p, depth),
    estimationDescription: `${fitted.converged ? "converged" : "did not converge"} after ${fitted.iterations} average-information steps from sigma2 = ${start[0]!.toPrecision(3)} at every level`,
  };

  // Fixed effects at the estimate.
  const beta = coefficientsToOriginalScale(conditioning, gamma);
  const covariance = covarianceToOriginalScale(conditioning, conditionedCovariance);
  const critical = criticalValue(confidenceLevel, "z", null);
  const coefficients: CoefficientEstimate[] = design.columnNames.map((term, j) => {
    const standardError = Math.sqrt(covariance[j * p + j]!);
    const statistic = beta[j]! / standardError;
    return { term, estimate: beta[j]!, standardError, statistic, pValue: coefficientPValue(statistic, "z", null), ciLower: beta[j]! - critical * standardError, ciUpper: beta[j]! + critical * standardError };
  });
  const moderatorColumns = Array.from({ length: p }, (_, j) => j).filter((j) => j !== conditioning.interceptColumn);
  let moderatorTest: MetaModelResult["moderatorTest"] = null;
  if (moderatorColumns.length > 0) {
    const statistic = waldStatistic(gamma, conditionedCovariance, p, moderatorColumns);
    moderatorTest = { statistic, distribution: "chi-square", df: moderatorColumns.length, denominatorDf: null, pValue: chiSquareUpperP(statistic, moderatorColumns.length), terms: moderatorColumns.map((j) => design.columnNames[j]!) };
  }

  // Per-estimate diagnostics from the rows of V^{-1}[X, 1].
  const weightPercent = new Float64Array(k);
  const fittedValues = new Float64Array(k);
  const residuals = new Float64Array(k);
  const standardizedResiduals = new Float64Array(k);
  const leverage = new Float64Array(k);
  let totalWeight = 0;
  for (let i = 0; i < k; i += 1) totalWeight += rows[i * (p + 1) + p]!;
  const undefinedStandardized: number[] = [];
  for (let i = 0; i < k; i += 1) {
    let mean = 0;
    let hat = 0;
    let quadratic = 0;
    for (let a = 0; a < p; a += 1) {
      const xa = conditioning.data[i * p + a]!;
      mean += xa * gamma[a]!;
      let inner = 0;
      let innerX = 0;
      for (let b = 0; b < p; b += 1) {
        inner += conditionedCovariance[a * p + b]! * rows[i * (p + 1) + b]!;
        innerX += conditionedCovariance[a * p + b]! * conditioning.data[i * p + b]!;
      }
      hat += xa * inner;
      quadratic += xa * innerX;
    }
    weightPercent[i] = (100 * rows[i * (p + 1) + p]!) / totalWeight;
    fittedValues[i] = mean;
    residuals[i] = data.estimates[i]! - mean;
    leverage[i] = hat;
    const totalVariance = data.variances[i]! + totalSigma2;
    const residualVariance = totalVariance - quadratic;
    if (residualVariance > 1e-10 * totalVariance) standardizedResiduals[i] = residuals[i]! / Math.sqrt(residualVariance);
    else {
      standardizedResiduals[i] = Number.NaN;
      undefinedStandardized.push(i);
    }
  }
  if (undefinedStandardized.length > 0) {
    warnings.push(warning("implausible_fit", `standardized residuals are undefined for estimates ${undefinedStandardized.slice(0, 10).map((i) => i + 1).join(", ")}${undefinedStandardized.length > 10 ? ", ..." : ""}: the model fits them exactly`));
  }

  const linearPredictor = {
    columnNames: design.columnNames,
    interceptColumn: conditioning.interceptColumn,
    centres: Array.from(conditioning.centres),
    scales: Array.from(conditioning.scales),
    coefficients: Array.from(gamma),
    covariance: Array.from(conditionedCovariance),
  };
  const methodInfo = METHOD_DESCRIPTIONS[method];
  const testInfo = { ...TEST_DESCRIPTIONS.z, df: null };
  const defaultRow = options.predictAt ?? (p === 1 && conditioning.interceptColumn === 0 ? [1] : undefined);
  const prediction: Prediction | Unavailable =
    defaultRow === undefined
      ? { available: false, reason: "a meta-regression predicts at given moderator values; none were given" }
      : predictAt({ linearPredictor, test: testInfo, k, p, confidenceLevel, method: methodInfo, heterogeneity: { tau2: totalSigma2 } }, defaultRow);

  let robust: ClusterRobustInference | undefined;
  if (options.cluster) {
    const clusters = clusterRows(k, options.cluster);
    const outer = levels.rowGroups[0]!;
    const clusterOfGroup = new Int32Array(levels.groupCounts[0]!).fill(-1);
    for (let i = 0; i < k; i += 1) {
      const g = outer[i]!;
      const j = clusters.clusterOfRow[i]!;
      if (clusterOfGroup[g] === -1) clusterOfGroup[g] = j;
      else if (clusterOfGroup[g] !== j) {
        throw new ModelInputError(
          `the random effects at level '${levels.names[0]}' span clusters: ${levels.labels[0]![g]} has estimates in ${options.cluster.name} '${clusters.names[clusterOfGroup[g]!]}' and '${clusters.names[j]}'. Sandwich standard errors need clusters that are independent under the model: cluster by '${levels.names[0]}' (or a coarser grouping), or drop that level`,
        );
      }
    }
    const outcome = robustInference({
      conditioning,
      conditionedCoefficients: gamma,
      bread: conditionedCovariance,
      estimates: data.estimates,
      clusters,
      clusterName: options.cluster.name,
      confidenceLevel,
      workingCovariance: nestedCovariance(levels, data.variances, sigma2),
    });
    robust = outcome.inference;
    warnings.push(...outcome.warnings);
  }

  return freeze<MetaModelResult>({
    method: methodInfo,
    test: testInfo,
    confidenceLevel,
    k,
    studyCount: k,
    p,
    caseWeighted: false,
    coefficients,
    coefficientCovariance: Array.from(covariance),
    heterogeneity: {
      scope: moderatorColumns.length > 0 ? "residual" : "total",
      tau2: totalSigma2,
      tau: Math.sqrt(totalSigma2),
      tau2StandardError: null,
      interval: { available: false, reason: "a multilevel model has one variance per level: see the profile-likelihood interval of each variance component" },
      typicalWithinStudyVariance: typicalVariance,
      i2: i2Percent(totalSigma2, typicalVariance),
      h2: h2Ratio(totalSigma2, typicalVariance),
      q: qAtZero,
      qDf,
      qPValue: chiSquareUpperP(qAtZero, qDf),
    },
    moderatorTest,
    residualHeterogeneity: moderatorColumns.length > 0 ? { q: qAtZero, df: qDf, pValue: chiSquareUpperP(qAtZero, qDf) } : null,
    pseudoR2: moderatorColumns.length > 0 ? { available: false, reason: "pseudo-R^2 is reported for single-level models; compare each level's variance with the model without moderators" } : null,
    prediction,
    permutationTest: null,
    studies: { weightPercent, fitted: fittedValues, residuals, standardizedResiduals, leverage },
    fit: { converged: fitted.converged, iterations: fitted.iterations, logLikelihood: maximum, logLikelihoodKind: method === "reml" ? "restricted" : "full" },
    warnings,
    linearPredictor,
    multilevel,
    ...(robust ? { robust } : {}),
  });
}
