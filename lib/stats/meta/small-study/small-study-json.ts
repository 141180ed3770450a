/**
 * The JSON shape (snake_case, as `pool`) of the small-study analyses, for the CLI's
 * `--format json` and the API. A test that cannot be computed is `{ available: false, note }`.
 * Every number is finite. Rows are 1-based.
 */
import type { CoefficientEstimate, Unavailable } from "../meta-result";
import { finiteNumber, modelJson, warningsJson } from "../sensitivity/sensitivity-json";
import type { RegressionCoefficient } from "./egger-test";
import type { FunnelData, FunnelPointData, FunnelRegion } from "./funnel-data";
import type { SmallStudyAnalyses } from "./small-study-analyses";

type Json = Record<string, unknown>;

function section<T extends { available: true }>(value: T | Unavailable, write: (value: T) => Json): Json {
  return value.available ? { available: true, ...write(value) } : { available: false, note: value.reason };
}

function coefficientJson(c: RegressionCoefficient | CoefficientEstimate, field: string): Json {
  return {
    estimate: finiteNumber(c.estimate, `${field} estimate`),
    se: finiteNumber(c.standardError, `${field} se`),
    statistic: finiteNumber(c.statistic, `${field} statistic`),
    p_value: finiteNumber(c.pValue, `${field} p_value`),
    ci_lower: finiteNumber(c.ciLower, `${field} ci_lower`),
    ci_upper: finiteNumber(c.ciUpper, `${field} ci_upper`),
  };
}

const pointJson = (p: FunnelPointData) => ({ label: p.label, estimate: p.estimate, se: p.standardError });
const regionJson = (r: FunnelRegion) => ({ centre: r.centre, z: r.z, lower_at_max_se: r.lowerAtMaxSe, upper_at_max_se: r.upperAtMaxSe });

/** Example: funnelToJson(analyses.funnel).contours[1].p is 0.05. */
export function funnelToJson(funnel: FunnelData): Json {
  return {
    points: funnel.points.map(pointJson),
    filled: funnel.filled.map(pointJson),
    pooled_estimate: funnel.pooledEstimate,
    null_value: funnel.nullValue,
    max_se: funnel.maxStandardError,
    pseudo_confidence_region: { level: funnel.pseudoConfidenceRegion.level, ...regionJson(funnel.pseudoConfidenceRegion) },
    contours: funnel.contours.map((c) => ({ p: c.p, ...regionJson(c) })),
  };
}

/** Example: smallStudyToJson(smallStudyAnalyses(data)).egger.intercept.p_value. */
export function smallStudyToJson(analyses: SmallStudyAnalyses): Json {
  return {
    analysis: "small_study",
    model: modelJson(analyses.model),
    funnel: funnelToJson(analyses.funnel),
    egger: section(analyses.egger, (e) => ({
      description: e.description,
      k: e.k,
      df: e.intercept.df,
      intercept: coefficientJson(e.intercept, "egger intercept"),
      slope: coefficientJson(e.slope, "egger slope"),
      references: [...e.references],
    })),
    se_regression: section(analyses.standardErrorRegression, (r) => ({
      description: r.description,
      method: r.fit.method.method,
      test: r.fit.test.test,
      test_df: r.fit.test.df,
      se_coefficient: coefficientJson(r.standardErrorCoefficient, "se coefficient"),
      intercept: coefficientJson(r.fit.coefficients[0]!, "se regression intercept"),
      tau2: r.fit.heterogeneity.tau2,
      warnings: warningsJson(r.fit.warnings),
      references: [...r.references],
    })),
    rank_correlation: section(analyses.rankCorrelation, (r) => ({
      description: r.description,
      k: r.k,
      common_effect: r.commonEffect,
      kendall_tau: finiteNumber(r.correlation.tau, "kendall tau"),
      score: r.correlation.score,
      score_variance: r.correlation.scoreVariance,
      z: finiteNumber(r.correlation.z, "rank correlation z"),
      p_value: finiteNumber(r.correlation.pValue, "rank correlation p_value"),
      p_value_method: "normal approximation (ties corrected, no continuity correction)",
      exact_p_value: r.correlation.exactPValue,
      exact_note: r.correlation.exactNote,
      ties: r.correlation.ties,
      references: [...r.references],
    })),
    trim_and_fill: section(analyses.trimAndFill, (t) => ({
      estimator: t.estimator,
      estimator_formula: t.estimatorFormula,
      side: t.side,
      side_chosen_by: t.sideChosenBy,
      side_reason: t.sideReason,
      k0: t.k0,
      estimator_value: t.estimatorValue,
      steps: t.steps,
      converged: t.converged,
      trimmed_rows: t.trimmed.map((row) => row + 1),
      centre: t.centre,
      filled: t.filled.map((f) => ({ label: f.label, estimate: f.estimate, se: f.standardError, mirror_of_row: f.mirrorOf + 1 })),
      adjusted: modelJson(t.adjusted),
      notes: [...t.notes],
      references: [...t.references],
    })),
    notes: [...analyses.notes],
    warnings: warningsJson(analyses.warnings),
  };
}
