/**
 * The snake_case JSON of the multilevel and cluster-robust parts of a MetaModelResult, used by
 * result-json.ts (`variance_components`, `multilevel`, `robust`). As there, every number is finite:
 * what cannot be computed is null with a note, never NaN.
 */
import type { ClusterRobustInference } from "../robust/cluster-robust-result";
import type { MultilevelSummary } from "./multilevel-result";

export interface VarianceComponentJson {
  level: string;
  sigma2: number;
  /** Profile-likelihood limits; null (with ci_note) when they could not be computed. */
  ci_lower: number | null;
  ci_upper: number | null;
  /** Per-level I^2 in percent. */
  i2: number;
  groups: number;
  sigma: number;
  sigma2_se: number | null;
  at_boundary: boolean;
  ci_note: string | null;
  /** Likelihood-ratio test against the model without this level; p from the 50:50 mixture of chi2_0 and chi2_1. */
  lrt_statistic: number | null;
  lrt_p_value: number | null;
  lrt_note: string | null;
}

export interface MultilevelJson {
  total_sigma2: number;
  total_i2: number;
  typical_within_study_variance: number;
  i2_description: string;
  ci_method: "profile-likelihood";
  ci_description: string | null;
  lrt_distribution: "50:50 mixture of chi2_0 and chi2_1";
  lrt_description: string | null;
  aic: number;
  bic: number;
  parameters: number;
  bic_n: number;
  information_criteria_description: string;
  estimation: string;
}

export interface RobustJson {
  method: "CR2";
  name: string;
  description: string;
  references: string[];
  cluster: string;
  clusters: number;
  smallest_cluster: number;
  largest_cluster: number;
  confidence_level: number;
  coefficients: { term: string; estimate: number; se: number; df: number; statistic: number; p_value: number; ci_lower: number; ci_upper: number }[];
  covariance: number[][];
}

function finite(value: number, field: string): number {
  if (!Number.isFinite(value)) throw new Error(`internal: ${field} is ${value}; a reported number must be finite`);
  return value;
}

/** `variance_components`: one object per level, outermost first. */
export function varianceComponentsJson(summary: MultilevelSummary): VarianceComponentJson[] {
  return summary.components.map((c) => ({
    level: c.level,
    sigma2: finite(c.sigma2, `${c.level} sigma2`),
    ci_lower: c.interval.available ? finite(c.interval.lower, `${c.level} ci_lower`) : null,
    ci_upper: c.interval.available ? finite(c.interval.upper, `${c.level} ci_upper`) : null,
    i2: finite(c.i2, `${c.level} i2`),
    groups: c.groups,
    sigma: finite(c.sigma, `${c.level} sigma`),
    sigma2_se: c.standardError,
    at_boundary: c.atBoundary,
    ci_note: c.interval.available ? (c.interval.lowerAtZero ? "the lower limit is 0 (the profile likelihood at 0 is above the cut-off)" : null) : c.interval.reason,
    lrt_statistic: c.test.available ? finite(c.test.statistic, `${c.level} lrt`) : null,
    lrt_p_value: c.test.available ? finite(c.test.pValue, `${c.level} lrt p`) : null,
    lrt_note: c.test.available ? null : c.test.reason,
  }));
}

/** `multilevel`: totals, the information criteria and how everything was obtained. */
export function multilevelJson(summary: MultilevelSummary): MultilevelJson {
  const interval = summary.components.map((c) => c.interval).find((i) => i.available);
  const test = summary.components.map((c) => c.test).find((t) => t.available);
  return {
    total_sigma2: finite(summary.totalSigma2, "total_sigma2"),
    total_i2: finite(summary.totalI2, "total_i2"),
    typical_within_study_variance: finite(summary.typicalWithinStudyVariance, "typical_within_study_variance"),
    i2_description: summary.i2Description,
    ci_method: "profile-likelihood",
    ci_description: interval?.available ? interval.description : null,
    lrt_distribution: "50:50 mixture of chi2_0 and chi2_1",
    lrt_description: test?.available ? test.description : null,
    aic: finite(summary.informationCriteria.aic, "aic"),
    bic: finite(summary.informationCriteria.bic, "bic"),
    parameters: summary.informationCriteria.parameters,
    bic_n: summary.informationCriteria.n,
    information_criteria_description: summary.informationCriteria.description,
    estimation: summary.estimationDescription,
  };
}

/** `robust`: the CR2 coefficients and covariance. */
export function robustJson(robust: ClusterRobustInference): RobustJson {
  const p = robust.coefficients.length;
  return {
    method: robust.method,
    name: robust.name,
    description: robust.description,
    references: [...robust.references],
    cluster: robust.cluster,
    clusters: robust.clusterCount,
    smallest_cluster: robust.smallestCluster,
    largest_cluster: robust.largestCluster,
    confidence_level: robust.confidenceLevel,
    coefficients: robust.coefficients.map((c) => ({
      term: c.term,
      estimate: finite(c.estimate, `${c.term} robust estimate`),
      se: finite(c.standardError, `${c.term} robust se`),
      df: finite(c.df, `${c.term} robust df`),
      statistic: finite(c.statistic, `${c.term} robust statistic`),
      p_value: finite(c.pValue, `${c.term} robust p`),
      ci_lower: finite(c.ciLower, `${c.term} robust ci_lower`),
      ci_upper: finite(c.ciUpper, `${c.term} robust ci_upper`),
    })),
    covariance: Array.from({ length: p }, (_, r) => Array.from({ length: p }, (__, c) => finite(robust.covariance[r * p + c]!, "robust covariance"))),
  };
}
