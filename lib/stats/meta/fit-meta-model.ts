/**
 * Fits a common-effect, random-effects or mixed-effects (meta-regression) model and returns one
 * immutable MetaModelResult.
 *
 * References (each step's file has its own):
 * - Hedges, L. V. & Olkin, I. (1985). Statistical Methods for Meta-Analysis. Academic Press.
 * - Raudenbush, S. W. (2009). Analyzing effect sizes: random-effects models. In The Handbook of
 *   Research Synthesis and Meta-Analysis, 2nd ed., ch. 16.
 * - Viechtbauer, W. (2005, 2007), Higgins & Thompson (2002, 2004), Higgins, Thompson &
 *   Spiegelhalter (2009), Knapp & Hartung (2003): see tau2-estimator.ts, q-profile-interval.ts,
 *   heterogeneity.ts, permutation-test.ts, prediction-interval.ts, meta-inference.ts.
 *
 * Pseudo-R^2 is the proportional reduction of tau^2 against the intercept-only model fitted with
 * the same estimator, truncated at 0 (Raudenbush 2009).
 */
import { interceptOnly, type DesignMatrix } from "../linear/design-matrix";
import { ModelInputError } from "../model-error";
import { warning, type StatWarning } from "../warnings";
import { chiSquareUpperP } from "../distributions/chi-square";
import {
  conditionDesign,
  coefficientsToOriginalScale,
  covarianceToOriginalScale,
  ILL_CONDITIONED_PIVOT,
  type ConditionedDesign,
} from "./design-conditioning";
import { h2Ratio, i2Percent, typicalWithinStudyVariance } from "./heterogeneity";
import type { MetaData } from "./meta-data";
import {
  coefficientPValue,
  conditionedInference,
  criticalValue,
  INFERENCE_TESTS,
  moderatorPValue,
  TEST_DESCRIPTIONS,
  type InferenceTest,
} from "./meta-inference";
import type {
  CoefficientEstimate,
  Heterogeneity,
  HeterogeneityInterval,
  MetaModelResult,
  PermutationTest,
  Prediction,
  PseudoR2,
  Unavailable,
} from "./meta-result";
import { permutationTest, type PermutationSettings } from "./permutation-test";
import { predictAt } from "./prediction-interval";
import { Q_PROFILE_DESCRIPTION, qProfileInterval } from "./q-profile-interval";
import { studyDiagnostics } from "./study-diagnostics";
import { estimateTau2, METHOD_DESCRIPTIONS, TAU2_METHODS, type Tau2Method } from "./tau2-estimator";
import type { IterationControl } from "./tau2-estimate";
import { WeightedFit, WITH_LOG_LIKELIHOOD, WITH_TRACE, type MetaProblem } from "./weighted-fit";

export interface MetaModelOptions {
  /** tau^2 estimator, or "fe" for the common-effect model. Default "reml". */
  method?: Tau2Method;
  /** Inference: Wald z or Knapp-Hartung (HKSJ). Default "z". */
  test?: InferenceTest;
  /** Design with one row per study (see moderator-design.ts). Default: intercept only. */
  design?: DesignMatrix;
  /** Level of every interval. Default 0.95. */
  confidenceLevel?: number;
  /** Iteration limit for REML/ML/PM and the Q-profile roots. Default 1000 (Fisher scoring converges linearly; small k can take dozens of steps). */
  maxIterations?: number;
  /** Relative convergence tolerance on tau^2. Default 1e-10. */
  tolerance?: number;
  /** Design row for the prediction (user's coding). Default [1] for the intercept-only model; none otherwise. */
  predictAt?: ArrayLike<number>;
  /** Run the permutation test of the moderators with N permutations and this seed. */
  permutations?: PermutationSettings;
}

const FEW_STUDIES = 5;

/** Deep-freezes plain objects and arrays; typed arrays are left as they are (they cannot be frozen). */
export function freeze<T>(value: T): T {
  if (value === null || typeof value !== "object" || ArrayBuffer.isView(value)) return value;
  for (const key of Object.keys(value)) freeze((value as Record<string, unknown>)[key]);
  return Object.freeze(value);
}

export function resolveControl(options: Pick<MetaModelOptions, "maxIterations" | "tolerance">): IterationControl {
  const maxIterations = options.maxIterations ?? 1000;
  const tolerance = options.tolerance ?? 1e-10;
  if (!Number.isInteger(maxIterations) || maxIterations < 1) throw new ModelInputError(`maxIterations must be a positive integer, got ${maxIterations}`);
  if (!(tolerance > 0 && tolerance < 0.01)) throw new ModelInputError(`tolerance must lie in (0, 0.01), got ${tolerance}`);
  return { maxIterations, tolerance };
}

export function checkDesign(data: MetaData, design: DesignMatrix): void {
  if (design.rows !== data.k) throw new ModelInputError(`the design has ${design.rows} rows for ${data.k} studies`);
  // x * 0 is 0 for finite x and NaN otherwise: one cheap pass, then a search only on failure.
  let probe = 0;
  for (let i = 0; i < design.data.length; i += 1) probe += design.data[i]! * 0;
  if (probe !== 0) {
    const i = design.data.findIndex((x) => !Number.isFinite(x));
    throw new ModelInputError(`study ${Math.floor(i / design.columns) + 1}: design column '${design.columnNames[i % design.columns]}' is not a finite number`);
  }
  const p = design.columns;
  if (p < 1) throw new ModelInputError("the design has no columns");
  if (data.k === 1) throw new ModelInputError("one study pools nothing: a meta-analysis needs at least two studies");
  if (data.k <= p) {
    throw new ModelInputError(`${data.k} studies cannot support ${p} coefficients (${design.columnNames.join(", ")}): k must exceed the number of coefficients`);
  }
  if (data.effectiveK <= p) {
    throw new ModelInputError(`the case weights sum to ${data.effectiveK}, which must exceed the number of coefficients (${p})`);
  }
}

function moderatorColumnsOf(conditioning: ConditionedDesign): number[] {
  return Array.from({ length: conditioning.columns }, (_, j) => j).filter((j) => j !== conditioning.interceptColumn);
}

/** tau^2 of the intercept-only model with the same estimator, for pseudo-R^2. */
function pseudoR2(data: MetaData, method: Tau2Method, tau2: number, control: IterationControl, warnings: StatWarning[]): PseudoR2 | Unavailable {
  const problem: MetaProblem = {
    k: data.k,
    p: 1,
    effectiveK: data.effectiveK,
    estimates: data.estimates,
    variances: data.variances,
    caseWeights: data.caseWeights,
    design: interceptOnly(data.k).data,
    logDetGram: Math.log(data.k),
  };
  const estimate = estimateTau2(method, new WeightedFit(problem), control);
  if (!estimate.converged) {
    warnings.push(warning("non_convergence", "the intercept-only fit behind pseudo-R^2 did not converge; pseudo-R^2 is not reported"));
    return { available: false, reason: "the intercept-only tau^2 did not converge" };
  }
  if (!(estimate.tau2 > 0)) return { available: false, reason: "the intercept-only model has tau^2 = 0, so there is no between-study variance for the moderators to explain" };
  return { available: true, value: Math.max(0, (estimate.tau2 - tau2) / estimate.tau2), tau2InterceptOnly: estimate.tau2 };
}

/**
 * Fits the model to `data` (from metaData()).
 * Constraints: k >= 2 studies and k > p (and sum of case weights > p); a full-rank design with
 * finite entries; options as documented on MetaModelOptions.
 * Returns the frozen MetaModelResult: coefficients (SE, statistic, p, CI) on the design's scale,
 * heterogeneity with its Q-profile interval, moderator and residual-heterogeneity tests,
 * pseudo-R^2, the prediction, an optional permutation test, per-study diagnostics, fit information
 * and warnings.
 * Throws ModelInputError for one study, k <= p, a rank-deficient design (naming the terms), bad
 * options, a permutation test without moderators, or HKSJ on an exact fit.
 * Example: fitMetaModel(metaData({ estimates: y, variances: v })).coefficients[0] is the REML
 * pooled estimate with its Wald z test.
 */
export function fitMetaModel(data: MetaData, options: MetaModelOptions = {}): MetaModelResult {
  const method = options.method ?? "reml";
  const test = options.test ?? "z";
  const confidenceLevel = options.confidenceLevel ?? 0.95;
  if (!TAU2_METHODS.includes(method)) throw new ModelInputError(`unknown method '${method}'; use one of ${TAU2_METHODS.join(", ")}`);
  if (!INFERENCE_TESTS.includes(test)) throw new ModelInputError(`unknown test '${test}'; use one of ${INFERENCE_TESTS.join(", ")}`);
  if (!(confidenceLevel > 0 && confidenceLevel < 1)) throw new ModelInputError(`confidence level must lie in (0, 1), got ${confidenceLevel}`);
  const control = resolveControl(options);
  const design = options.design ?? interceptOnly(data.k);
  checkDesign(data, design);
  const warnings: StatWarning[] = [];

  const conditioning = conditionDesign(design);
  if (conditioning.smallestPivotRatio < ILL_CONDITIONED_PIVOT) {
    warnings.push(warning("ill_conditioned_design", `the moderators are nearly collinear (smallest pivot ratio ${conditioning.smallestPivotRatio.toExponential(2)}); their coefficients are poorly determined`));
  }
  const { k, effectiveK } = data;
  const p = design.columns;
  const problem: MetaProblem = {
    k,
    p,
    effectiveK,
    estimates: data.estimates,
    variances: data.variances,
    caseWeights: data.caseWeights,
    design: conditioning.data,
    logDetGram: conditioning.logDetGram,
  };
  const fit = new WeightedFit(problem);
  const residualDf = effectiveK - p;

  // At tau^2 = 0: Cochran's Q (Q_E with moderators) and the typical within-study variance.
  fit.evaluate(0, WITH_TRACE);
  const qAtZero = fit.q;
  const typicalVariance = typicalWithinStudyVariance(effectiveK, p, fit.traceP);
  const momentTau2 = Math.max(0, (qAtZero - residualDf) / fit.traceP);
  const qPValue = chiSquareUpperP(qAtZero, residualDf);

  const estimate = estimateTau2(method, fit, control);
  const tau2 = estimate.tau2;
  if (!estimate.converged) {
    warnings.push(warning("non_convergence", `${METHOD_DESCRIPTIONS[method].name}: tau^2 did not converge in ${estimate.iterations} iterations (limit ${control.maxIterations}); the estimates below use the last value ${tau2}`));
  }
  if (method !== "fe" && tau2 === 0) {
    warnings.push(warning("boundary_variance_component", "tau^2 is estimated as 0 (the boundary of its range): the random-effects estimates equal the common-effect ones"));
  }
  if (method !== "fe" && k < FEW_STUDIES) {
    warnings.push(warning("few_studies", `tau^2 from only ${k} studies is very imprecise (common practice: treat fewer than ${FEW_STUDIES} studies with caution); see its Q-profile interval`));
  }

  fit.evaluate(tau2, WITH_LOG_LIKELIHOOD);
  const logLikelihood = method === "reml" ? fit.restrictedLogLikelihood() : fit.fullLogLikelihood();
  const moderatorColumns = moderatorColumnsOf(conditioning);
  const inference = conditionedInference(fit, test, moderatorColumns);
  const beta = coefficientsToOriginalScale(conditioning, fit.coefficients);
  const covariance = covarianceToOriginalScale(conditioning, inference.covariance);
  const critical = criticalValue(confidenceLevel, test, inference.residualDf);
  const coefficients: CoefficientEstimate[] = design.columnNames.map((term, j) => {
    const standardError = Math.sqrt(covariance[j * p + j]!);
    const statistic = beta[j]! / standardError;
    return {
      term,
      estimate: beta[j]!,
      standardError,
      statistic,
      pValue: coefficientPValue(statistic, test, inference.residualDf),
      ciLower: beta[j]! - critical * standardError,
      ciUpper: beta[j]! + critical * standardError,
    };
  });
  const observedStatistics = new Float64Array(p).fill(Number.NaN);
  for (const column of moderatorColumns) observedStatistics[column] = Math.abs(fit.coefficients[column]!) / Math.sqrt(inference.covariance[column * p + column]!);
  const conditionedCoefficients = Array.from(fit.coefficients);

  const diagnostics = studyDiagnostics(fit);
  if (diagnostics.undefinedStandardized.length > 0) {
    const list = diagnostics.undefinedStandardized.slice(0, 10).map((i) => i + 1).join(", ");
    warnings.push(warning("implausible_fit", `standardized residuals are undefined for studies ${list}${diagnostics.undefinedStandardized.length > 10 ? ", ..." : ""}: the model fits them exactly (leverage 1)`));
  }

  // The Q-profile interval (re-uses the workspace, so it comes after everything read from it).
  const limits = qProfileInterval(fit, qAtZero, confidenceLevel, tau2 > 0 ? tau2 : momentTau2, control);
  let interval: HeterogeneityInterval | Unavailable;
  if (!limits.converged) {
    interval = { available: false, reason: "the Q-profile limits did not converge" };
    warnings.push(warning("interval_unavailable", "the Q-profile confidence limits for tau^2 did not converge; no interval is reported"));
  } else {
    interval = {
      available: true,
      method: "q-profile",
      description: Q_PROFILE_DESCRIPTION,
      level: confidenceLevel,
      tau2Lower: limits.lower,
      tau2Upper: limits.upper,
      i2Lower: i2Percent(limits.lower, typicalVariance),
      i2Upper: i2Percent(limits.upper, typicalVariance),
      h2Lower: h2Ratio(limits.lower, typicalVariance),
      h2Upper: h2Ratio(limits.upper, typicalVariance),
      lowerAtZero: limits.lowerAtZero,
      upperAtZero: limits.upperAtZero,
    };
    if (limits.upperAtZero) {
      const percent = ((1 - confidenceLevel) / 2) * 100;
      warnings.push(
        warning(
          "boundary_variance_component",
          `the Q-profile interval for tau^2 is the single point 0: Q(0) = ${qAtZero.toPrecision(4)} is below the ${percent}% quantile ${limits.quantiles[0].toPrecision(4)} of chi-square(${residualDf}); the estimates agree more closely than their sampling variances predict`,
        ),
      );
    }
  }
  const basisTau2 = method === "fe" ? momentTau2 : tau2;
  const heterogeneity: Heterogeneity = {
    scope: moderatorColumns.length > 0 ? "residual" : "total",
    tau2,
    tau: Math.sqrt(tau2),
    tau2StandardError: estimate.standardError,
    interval,
    typicalWithinStudyVariance: typicalVariance,
    i2: i2Percent(basisTau2, typicalVariance),
    h2: h2Ratio(basisTau2, typicalVariance),
    q: qAtZero,
    qDf: residualDf,
    qPValue,
  };

  const moderatorPValueAtFit = moderatorPValue(inference);
  const moderatorTest =
    inference.moderatorStatistic === null
      ? null
      : {
          statistic: inference.moderatorStatistic,
          distribution: test === "z" ? ("chi-square" as const) : ("F" as const),
          df: inference.moderatorDf,
          denominatorDf: inference.residualDf,
          pValue: moderatorPValueAtFit!,
          terms: moderatorColumns.map((j) => design.columnNames[j]!),
        };
  const residualHeterogeneity = moderatorColumns.length > 0 ? { q: qAtZero, df: residualDf, pValue: qPValue } : null;
  let r2: PseudoR2 | Unavailable | null = null;
  if (moderatorColumns.length > 0 && method !== "fe") {
    r2 = conditioning.interceptColumn >= 0 ? pseudoR2(data, method, tau2, control, warnings) : { available: false, reason: "pseudo-R^2 compares with the intercept-only model; this design has no intercept" };
  }

  const linearPredictor = {
    columnNames: design.columnNames,
    interceptColumn: conditioning.interceptColumn,
    centres: Array.from(conditioning.centres),
    scales: Array.from(conditioning.scales),
    coefficients: conditionedCoefficients,
    covariance: Array.from(inference.covariance),
  };
  const testInfo = { ...TEST_DESCRIPTIONS[test], df: inference.residualDf };
  const methodInfo = METHOD_DESCRIPTIONS[method];
  const source = { linearPredictor, test: testInfo, k: effectiveK, p, confidenceLevel, method: methodInfo, heterogeneity: { tau2 } };
  const defaultRow = options.predictAt ?? (p === 1 && conditioning.interceptColumn === 0 ? [1] : undefined);
  const prediction: Prediction | Unavailable =
    defaultRow === undefined ? { available: false, reason: "a meta-regression predicts at given moderator values; none were given" } : predictAt(source, defaultRow);
  if ("interval" in prediction && !prediction.interval.available && method !== "fe") {
    warnings.push(warning("interval_unavailable", `no prediction interval: ${prediction.interval.reason}`));
  }

  let permutation: PermutationTest | null = null;
  if (options.permutations !== undefined) {
    const { permutations, seed } = options.permutations;
    if (moderatorColumns.length === 0) throw new ModelInputError("a permutation test of the moderators needs at least one moderator");
    if (!Number.isInteger(permutations) || permutations < 1 || permutations > 1e6) throw new ModelInputError(`the number of permutations must be an integer in [1, 1e6], got ${permutations}`);
    if (!Number.isSafeInteger(seed)) throw new ModelInputError(`the permutation seed must be a safe integer, got ${seed}`);
    permutation = permutationTest(
      { problem, method, test, control, moderatorColumns, observedStatistics, observedModeratorStatistic: inference.moderatorStatistic! },
      { permutations, seed },
    );
    if (permutation.nonConvergedFits > 0) {
      warnings.push(warning("non_convergence", `${permutation.nonConvergedFits} of ${permutation.permutations} permuted fits did not converge; they are counted at their last iterate`));
    }
  }

  return freeze<MetaModelResult>({
    method: methodInfo,
    test: testInfo,
    confidenceLevel,
    k: effectiveK,
    studyCount: k,
    p,
    caseWeighted: data.caseWeights !== null,
    coefficients,
    coefficientCovariance: Array.from(covariance),
    heterogeneity,
    moderatorTest,
    residualHeterogeneity,
    pseudoR2: r2,
    prediction,
    permutationTest: permutation,
    studies: {
      weightPercent: diagnostics.weightPercent,
      fitted: diagnostics.fitted,
      residuals: diagnostics.residuals,
      standardizedResiduals: diagnostics.standardizedResiduals,
      leverage: diagnostics.leverage,
    },
    fit: { converged: estimate.converged, iterations: estimate.iterations, logLikelihood, logLikelihoodKind: method === "reml" ? "restricted" : "full" },
    warnings,
    linearPredictor,
  });
}
