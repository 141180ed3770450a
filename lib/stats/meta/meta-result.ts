/**
 * The result of one meta-analysis or meta-regression fit. Everything the CLI, API, pages and
 * report show is read from here; nothing is recomputed downstream. The object and its nested
 * plain objects are frozen; the per-study arrays are typed arrays exposed read-only.
 *
 * Conventions: "k" is the number of studies (the sum of the case weights when they are given), p
 * the number of coefficients. Coefficients are on the scale of the design the caller built; the
 * fit works internally on centred, scaled columns (design-conditioning.ts) and reports back.
 * A quantity that cannot be computed is `{ available: false, reason }`, never NaN.
 */
import type { StatWarning } from "../warnings";
import type { InferenceTest, TestDescription } from "./meta-inference";
import type { MethodDescription, Tau2Method } from "./tau2-estimator";
import type { MultilevelSummary } from "./multilevel/multilevel-result";
import type { ClusterRobustInference } from "./robust/cluster-robust-result";

export interface Unavailable {
  readonly available: false;
  readonly reason: string;
}

export interface CoefficientEstimate {
  /** Design column name: "intercept", a numeric moderator's name, or "moderator[level]". */
  readonly term: string;
  readonly estimate: number;
  readonly standardError: number;
  /** z or t statistic (estimate / standardError). */
  readonly statistic: number;
  readonly pValue: number;
  readonly ciLower: number;
  readonly ciUpper: number;
}

export interface HeterogeneityInterval {
  readonly available: true;
  readonly method: "q-profile";
  readonly description: string;
  readonly level: number;
  readonly tau2Lower: number;
  readonly tau2Upper: number;
  readonly i2Lower: number;
  readonly i2Upper: number;
  readonly h2Lower: number;
  readonly h2Upper: number;
  /** Q(0) is below the upper chi-square quantile: no tau^2 > 0 is excluded from below. */
  readonly lowerAtZero: boolean;
  /** Q(0) is below the lower chi-square quantile: the interval is the single point 0. */
  readonly upperAtZero: boolean;
}

export interface Heterogeneity {
  /** "total" for the intercept-only model; "residual" (unexplained by the moderators) otherwise. */
  readonly scope: "total" | "residual";
  readonly tau2: number;
  readonly tau: number;
  /** Inverse-information standard error of tau^2 (ML and REML, interior estimates), else null. */
  readonly tau2StandardError: number | null;
  readonly interval: HeterogeneityInterval | Unavailable;
  /** s^2 = (k - p) / tr P at inverse-variance weights (Higgins & Thompson 2002 for p = 1). */
  readonly typicalWithinStudyVariance: number;
  /** I^2 in percent: 100 tau^2 / (tau^2 + s^2). For the common-effect model, from the DL moment estimate. */
  readonly i2: number;
  /** H^2 = (tau^2 + s^2) / s^2 (same basis as i2). */
  readonly h2: number;
  /** Q at inverse-variance weights (Cochran's Q; Q_E with moderators), on k - p df. */
  readonly q: number;
  readonly qDf: number;
  readonly qPValue: number;
}

export interface ModeratorTest {
  /** Wald chi-square Q_M (z test) or F (HKSJ). */
  readonly statistic: number;
  readonly distribution: "chi-square" | "F";
  /** Numerator df: the number of moderator coefficients m. */
  readonly df: number;
  /** Denominator df k - p for F, null for chi-square. */
  readonly denominatorDf: number | null;
  readonly pValue: number;
  /** The coefficients tested. */
  readonly terms: readonly string[];
}

export interface ResidualHeterogeneityTest {
  readonly q: number;
  readonly df: number;
  readonly pValue: number;
}

export interface PseudoR2 {
  readonly available: true;
  /** max(0, (tau2_0 - tau2) / tau2_0), a proportion in [0, 1]. */
  readonly value: number;
  /** tau2_0: the same estimator's tau^2 in the intercept-only model. */
  readonly tau2InterceptOnly: number;
}

export interface PredictionInterval {
  readonly available: true;
  readonly lower: number;
  readonly upper: number;
  /** t degrees of freedom: k - p - 1 (Higgins, Thompson & Spiegelhalter's k - 2 when p = 1). */
  readonly df: number;
  /** sqrt(tau^2 + SE(mean)^2). */
  readonly standardError: number;
}

export interface Prediction {
  readonly available: true;
  /** The design row the prediction is for (user's coding). */
  readonly at: readonly number[];
  /** x0' beta: the mean effect at these moderator values. */
  readonly estimate: number;
  readonly standardError: number;
  readonly ciLower: number;
  readonly ciUpper: number;
  readonly interval: PredictionInterval | Unavailable;
}

export interface PermutationTest {
  /** Permutations evaluated (all k! when exact, including the observed order). */
  readonly permutations: number;
  readonly exact: boolean;
  /** Null for complete enumeration. */
  readonly seed: number | null;
  /** Per coefficient, in coefficient order; null for the intercept (permuting moderators does not test it). */
  readonly coefficientPValues: readonly (number | null)[];
  readonly moderatorTestPValue: number;
  /** Permuted fits whose tau^2 iteration did not converge (kept in the count). */
  readonly nonConvergedFits: number;
  readonly description: string;
}

export interface FitInfo {
  readonly converged: boolean;
  readonly iterations: number;
  /** REML: the restricted log-likelihood; other methods: the full log-likelihood at the estimates. */
  readonly logLikelihood: number;
  readonly logLikelihoodKind: "restricted" | "full";
}

export interface StudyDiagnostics {
  /** 100 w_i / sum w: each study's share of the total weight. */
  readonly weightPercent: ArrayLike<number>;
  readonly fitted: ArrayLike<number>;
  /** y_i - fitted_i. */
  readonly residuals: ArrayLike<number>;
  /** residual / sqrt(v_i + tau^2 - x_i' Cov x_i) (model-based covariance); NaN where leverage is 1, with a warning. */
  readonly standardizedResiduals: ArrayLike<number>;
  /** Hat values w_i x_i' (X'WX)^{-1} x_i; they sum to p. */
  readonly leverage: ArrayLike<number>;
}

/** The fitted linear predictor in the internal coordinates, for accurate predictions (prediction-interval.ts). */
export interface LinearPredictor {
  readonly columnNames: readonly string[];
  readonly interceptColumn: number;
  readonly centres: readonly number[];
  readonly scales: readonly number[];
  readonly coefficients: readonly number[];
  /** Covariance of the internal coefficients under the chosen test, p x p row-major. */
  readonly covariance: readonly number[];
}

export interface MetaModelResult {
  readonly method: MethodDescription;
  readonly test: TestDescription & { readonly df: number | null };
  readonly confidenceLevel: number;
  readonly k: number;
  /** Number of rows (studies); equals k without case weights. */
  readonly studyCount: number;
  readonly p: number;
  readonly caseWeighted: boolean;
  readonly coefficients: readonly CoefficientEstimate[];
  /** Covariance of the coefficients under the chosen test, p x p row-major. */
  readonly coefficientCovariance: readonly number[];
  readonly heterogeneity: Heterogeneity;
  readonly moderatorTest: ModeratorTest | null;
  readonly residualHeterogeneity: ResidualHeterogeneityTest | null;
  readonly pseudoR2: PseudoR2 | Unavailable | null;
  readonly prediction: Prediction | Unavailable;
  readonly permutationTest: PermutationTest | null;
  readonly studies: StudyDiagnostics;
  readonly fit: FitInfo;
  readonly warnings: readonly StatWarning[];
  readonly linearPredictor: LinearPredictor;
  /** Multilevel fits only (multilevel/fit-multilevel-model.ts): variance components per level. */
  readonly multilevel?: MultilevelSummary;
  /** When cluster-robust inference was asked for (robust/cluster-robust-inference.ts). */
  readonly robust?: ClusterRobustInference;
}

export type { InferenceTest, Tau2Method };
