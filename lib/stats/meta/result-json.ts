/**
 * The JSON shape of a MetaModelResult (snake_case), shared by the CLI's `--format json` and the
 * JSON API. Every number is finite: a quantity that cannot be computed is null, with the reason
 * in a `*_note` field or in `warnings`, never NaN (which JSON.stringify would turn into null
 * silently).
 */
import type { MetaModelResult } from "./meta-result";
import { multilevelJson, robustJson, varianceComponentsJson, type MultilevelJson, type RobustJson, type VarianceComponentJson } from "./multilevel/multilevel-json";
import { Q_PROFILE_DESCRIPTION } from "./q-profile-interval";

export interface MetaResultJson {
  model: {
    method: string;
    method_name: string;
    method_description: string;
    test: string;
    test_name: string;
    test_description: string;
    /** Residual df of the t and F tests (HKSJ), null for z. */
    test_df: number | null;
    k: number;
    p: number;
    study_count: number;
    case_weighted: boolean;
    confidence_level: number;
    references: string[];
  };
  coefficients: { term: string; estimate: number; se: number; statistic: number; p_value: number; ci_lower: number; ci_upper: number }[];
  /** Covariance of the coefficients under the chosen test, one row per coefficient (for predictions and fitted bands). */
  coefficient_covariance: number[][];
  heterogeneity: {
    scope: "total" | "residual";
    tau2: number;
    tau: number;
    tau2_se: number | null;
    tau2_ci: [number, number] | null;
    i2: number;
    i2_ci: [number, number] | null;
    h2: number;
    h2_ci: [number, number] | null;
    ci_method: "q-profile";
    ci_description: string;
    ci_note: string | null;
    typical_within_study_variance: number;
    q: number;
    q_df: number;
    q_p: number;
  };
  /** Multilevel models: one variance component per level, outermost first; null for single-level models. */
  variance_components: VarianceComponentJson[] | null;
  /** Multilevel models: totals, information criteria, methods; null otherwise. */
  multilevel: MultilevelJson | null;
  /** Cluster-robust (CR2) inference when clusters were given; null otherwise. */
  robust: RobustJson | null;
  moderators_test: { statistic: number; distribution: string; df: number; df2: number | null; p_value: number; terms: string[] } | null;
  residual_heterogeneity: { q: number; df: number; p_value: number } | null;
  prediction_interval: [number, number] | null;
  prediction: {
    at: number[];
    estimate: number;
    se: number;
    ci_lower: number;
    ci_upper: number;
    interval_df: number | null;
    interval_se: number | null;
    note: string | null;
  } | null;
  prediction_note: string | null;
  r2: number | null;
  r2_note: string | null;
  permutation_test: {
    permutations: number;
    exact: boolean;
    seed: number | null;
    coefficient_p_values: Record<string, number>;
    moderators_test_p_value: number;
    non_converged_fits: number;
    description: string;
  } | null;
  fit: { converged: boolean; iterations: number; log_likelihood: number; log_likelihood_kind: string };
  studies?: { weight_percent: number; fitted: number; residual: number; standardized_residual: number | null; leverage: number }[];
  warnings: { code: string; message: string }[];
}

/** A number that must be finite: a NaN here is a bug upstream, so refuse loudly. */
function finite(value: number, field: string): number {
  if (!Number.isFinite(value)) throw new Error(`internal: ${field} is ${value}; a reported number must be finite`);
  return value;
}

function finiteOrNull(value: number): number | null {
  return Number.isFinite(value) ? value : null;
}

export interface ResultJsonOptions {
  /** Include the per-study rows (weights, fitted values, residuals). Default true. */
  includeStudies?: boolean;
}

/**
 * The snake_case JSON object of a fit.
 * Throws Error if a number that must be finite is not (it would be a defect in the fit).
 * Example: metaResultToJson(fitMetaModel(data)).heterogeneity.i2 is I^2 in percent.
 */
export function metaResultToJson(result: MetaModelResult, options: ResultJsonOptions = {}): MetaResultJson {
  const { heterogeneity: h, prediction } = result;
  const interval = h.interval.available ? h.interval : null;
  const json: MetaResultJson = {
    model: {
      method: result.method.method,
      method_name: result.method.name,
      method_description: result.method.description,
      test: result.test.test,
      test_name: result.test.name,
      test_description: result.test.description,
      test_df: result.test.df,
      k: result.k,
      p: result.p,
      study_count: result.studyCount,
      case_weighted: result.caseWeighted,
      confidence_level: result.confidenceLevel,
      references: [...result.method.references, ...result.test.references],
    },
    coefficients: result.coefficients.map((c) => ({
      term: c.term,
      estimate: finite(c.estimate, `${c.term} estimate`),
      se: finite(c.standardError, `${c.term} standard error`),
      statistic: finite(c.statistic, `${c.term} statistic`),
      p_value: finite(c.pValue, `${c.term} p-value`),
      ci_lower: finite(c.ciLower, `${c.term} ci_lower`),
      ci_upper: finite(c.ciUpper, `${c.term} ci_upper`),
    })),
    coefficient_covariance: result.coefficients.map((_, row) =>
      result.coefficients.map((__, column) => finite(result.coefficientCovariance[row * result.p + column]!, "coefficient covariance")),
    ),
    heterogeneity: {
      scope: h.scope,
      tau2: finite(h.tau2, "tau2"),
      tau: finite(h.tau, "tau"),
      tau2_se: h.tau2StandardError,
      tau2_ci: interval ? [finite(interval.tau2Lower, "tau2_ci"), finite(interval.tau2Upper, "tau2_ci")] : null,
      i2: finite(h.i2, "i2"),
      i2_ci: interval ? [finite(interval.i2Lower, "i2_ci"), finite(interval.i2Upper, "i2_ci")] : null,
      h2: finite(h.h2, "h2"),
      h2_ci: interval ? [finite(interval.h2Lower, "h2_ci"), finite(interval.h2Upper, "h2_ci")] : null,
      ci_method: "q-profile",
      ci_description: Q_PROFILE_DESCRIPTION,
      ci_note: !h.interval.available
        ? h.interval.reason
        : h.interval.upperAtZero
          ? "the interval is the single point 0 (Q at tau^2 = 0 is below the lower chi-square quantile)"
          : h.interval.lowerAtZero
            ? "the lower limit is 0 (Q at tau^2 = 0 is below the upper chi-square quantile)"
            : null,
      typical_within_study_variance: finite(h.typicalWithinStudyVariance, "typical_within_study_variance"),
      q: finite(h.q, "q"),
      q_df: h.qDf,
      q_p: finite(h.qPValue, "q_p"),
    },
    variance_components: result.multilevel ? varianceComponentsJson(result.multilevel) : null,
    multilevel: result.multilevel ? multilevelJson(result.multilevel) : null,
    robust: result.robust ? robustJson(result.robust) : null,
    moderators_test: result.moderatorTest
      ? {
          statistic: finite(result.moderatorTest.statistic, "moderators_test statistic"),
          distribution: result.moderatorTest.distribution,
          df: result.moderatorTest.df,
          df2: result.moderatorTest.denominatorDf,
          p_value: finite(result.moderatorTest.pValue, "moderators_test p_value"),
          terms: [...result.moderatorTest.terms],
        }
      : null,
    residual_heterogeneity: result.residualHeterogeneity
      ? { q: result.residualHeterogeneity.q, df: result.residualHeterogeneity.df, p_value: finite(result.residualHeterogeneity.pValue, "residual_heterogeneity p_value") }
      : null,
    prediction_interval: "interval" in prediction && prediction.interval.available ? [finite(prediction.interval.lower, "prediction"), finite(prediction.interval.upper, "prediction")] : null,
    prediction:
      "interval" in prediction
        ? {
            at: [...prediction.at],
            estimate: finite(prediction.estimate, "prediction estimate"),
            se: finite(prediction.standardError, "prediction se"),
            ci_lower: finite(prediction.ciLower, "prediction ci_lower"),
            ci_upper: finite(prediction.ciUpper, "prediction ci_upper"),
            interval_df: prediction.interval.available ? prediction.interval.df : null,
            interval_se: prediction.interval.available ? prediction.interval.standardError : null,
            note: prediction.interval.available ? null : prediction.interval.reason,
          }
        : null,
    prediction_note: "interval" in prediction ? (prediction.interval.available ? null : prediction.interval.reason) : prediction.reason,
    r2: result.pseudoR2?.available ? finite(result.pseudoR2.value, "r2") : null,
    r2_note: result.pseudoR2 === null ? null : result.pseudoR2.available ? null : result.pseudoR2.reason,
    permutation_test: result.permutationTest
      ? {
          permutations: result.permutationTest.permutations,
          exact: result.permutationTest.exact,
          seed: result.permutationTest.seed,
          coefficient_p_values: Object.fromEntries(
            result.coefficients.flatMap((c, j) => {
              const value = result.permutationTest!.coefficientPValues[j];
              return value === null || value === undefined ? [] : [[c.term, value]];
            }),
          ),
          moderators_test_p_value: result.permutationTest.moderatorTestPValue,
          non_converged_fits: result.permutationTest.nonConvergedFits,
          description: result.permutationTest.description,
        }
      : null,
    fit: {
      converged: result.fit.converged,
      iterations: result.fit.iterations,
      log_likelihood: finite(result.fit.logLikelihood, "log_likelihood"),
      log_likelihood_kind: result.fit.logLikelihoodKind,
    },
    warnings: result.warnings.map((w) => ({ code: w.code, message: w.message })),
  };
  if (options.includeStudies ?? true) {
    const { weightPercent, fitted, residuals, standardizedResiduals, leverage } = result.studies;
    json.studies = Array.from({ length: result.studyCount }, (_, i) => ({
      weight_percent: finite(weightPercent[i]!, `study ${i + 1} weight`),
      fitted: finite(fitted[i]!, `study ${i + 1} fitted`),
      residual: finite(residuals[i]!, `study ${i + 1} residual`),
      standardized_residual: finiteOrNull(standardizedResiduals[i]!),
      leverage: finite(leverage[i]!, `study ${i + 1} leverage`),
    }));
  }
  return json;
}
