/**
 * Cluster-robust (CR2) inference for a fitted meta-analysis model: the single-level models of
 * fit-meta-model.ts (any tau^2 method, common effect included) and, through robustInference, the
 * multilevel models. Clusters are the units assumed independent (e.g. sites): estimates within a
 * cluster may be correlated in ways the model does not know.
 *
 * References:
 * - Hedges, L. V., Tipton, E. & Johnson, M. C. (2010). Robust variance estimation in
 *   meta-regression with dependent effect size estimates. Research Synthesis Methods 1: 39-65.
 * - Tipton, E. (2015). Small sample adjustments for robust variance estimation with
 *   meta-regression. Psychological Methods 20: 375-393 (CR2 with Satterthwaite df; df < 4 flags
 *   unreliable tests).
 * - Pustejovsky, J. E. & Tipton, E. (2018). Journal of Business & Economic Statistics 36: 672-683.
 *
 * The working model is the fitted model itself: weights W = Phi^{-1} with Phi = diag(v + tau^2)
 * for a single-level model and the full nested covariance for a multilevel one. The coefficient
 * estimates are the model's; only their standard errors, tests and intervals are robust.
 */
import { studentTQuantile, studentTTwoSidedP } from "../../distributions/student-t";
import type { DesignMatrix } from "../../linear/design-matrix";
import { interceptOnly } from "../../linear/design-matrix";
import { ModelInputError } from "../../model-error";
import { warning, type StatWarning } from "../../warnings";
import { coefficientsToOriginalScale, conditionDesign, covarianceToOriginalScale, type ConditionedDesign } from "../design-conditioning";
import { freeze } from "../fit-meta-model";
import { StudyInputError, type MetaData } from "../meta-data";
import type { MetaModelResult } from "../meta-result";
import { WeightedFit } from "../weighted-fit";
import type { ClusterRobustInference, RobustCoefficient } from "./cluster-robust-result";
import { cr2Sandwich } from "./cr2-sandwich";

/** Below this many Satterthwaite df a robust t test is unreliable (Tipton 2015). */
export const SMALL_ROBUST_DF = 4;

export const CR2_DESCRIPTION =
  "Cluster-robust sandwich standard errors with the CR2 bias-reduced linearisation adjustment and the fitted model as working model; single-coefficient t tests on Satterthwaite degrees of freedom.";
export const CR2_REFERENCES: readonly string[] = [
  "Bell, R. M. & McCaffrey, D. F. (2002). Survey Methodology 28: 169-181.",
  "Tipton, E. (2015). Psychological Methods 20: 375-393.",
  "Pustejovsky, J. E. & Tipton, E. (2018). Journal of Business & Economic Statistics 36: 672-683.",
];

export interface ClusterSpec {
  /** The clustering variable's name (for output and messages), e.g. "site". */
  readonly name: string;
  /** One cluster label per estimate. */
  readonly labels: readonly string[];
}

export interface ClusterRows {
  readonly names: readonly string[];
  readonly rows: readonly Int32Array[];
  /** Cluster index of each estimate. */
  readonly clusterOfRow: Int32Array;
}

/**
 * Groups the estimates by cluster label.
 * Constraints: k labels, none empty, at least two distinct. Throws StudyInputError naming the
 * variable (and estimate).
 * Example: clusterRows(3, { name: "site", labels: ["a", "b", "a"] }).rows -> [[0, 2], [1]].
 */
export function clusterRows(k: number, spec: ClusterSpec): ClusterRows {
  if (spec.labels.length !== k) throw new StudyInputError(`cluster variable '${spec.name}' has ${spec.labels.length} labels for ${k} estimates`, spec.name);
  const index = new Map<string, number>();
  const members: number[][] = [];
  const clusterOfRow = new Int32Array(k);
  for (let i = 0; i < k; i += 1) {
    const label = spec.labels[i]!;
    if (label.trim() === "") throw new StudyInputError(`estimate ${i + 1}: cluster variable '${spec.name}' is empty; every estimate needs a cluster`, spec.name, i);
    let j = index.get(label);
    if (j === undefined) {
      j = members.length;
      index.set(label, j);
      members.push([]);
    }
    members[j]!.push(i);
    clusterOfRow[i] = j;
  }
  if (members.length < 2) {
    throw new StudyInputError(`cluster variable '${spec.name}' has a single cluster ('${spec.labels[0]}'); cluster-robust standard errors need at least two`, spec.name);
  }
  return { names: [...index.keys()], rows: members.map((m) => Int32Array.from(m)), clusterOfRow };
}

export interface RobustInferenceInput {
  readonly conditioning: ConditionedDesign;
  /** Conditioned coefficients gamma and the model bread M = (Z'WZ)^{-1} in those coordinates. */
  readonly conditionedCoefficients: ArrayLike<number>;
  readonly bread: Float64Array;
  readonly estimates: Float64Array;
  readonly clusters: ClusterRows;
  readonly clusterName: string;
  readonly workingCovariance: (rows: Int32Array) => Float64Array;
  readonly confidenceLevel: number;
}

/**
 * CR2 inference for the coefficients of a fit in conditioned coordinates (see the module comment).
 * Returns the inference (user's coding) and its warnings. Throws ModelInputError when a robust
 * standard error is 0 or undefined, and whatever cr2Sandwich throws.
 */
export function robustInference(input: RobustInferenceInput): { inference: ClusterRobustInference; warnings: StatWarning[] } {
  const { conditioning, conditionedCoefficients, bread, estimates, clusters, confidenceLevel } = input;
  const { rows: k, columns: p, data: design, columnNames } = conditioning;
  const residuals = new Float64Array(k);
  for (let i = 0; i < k; i += 1) {
    let fitted = 0;
    for (let a = 0; a < p; a += 1) fitted += design[i * p + a]! * conditionedCoefficients[a]!;
    residuals[i] = estimates[i]! - fitted;
  }
  const sandwich = cr2Sandwich({ p, design, residuals, bread, clusters: clusters.rows, workingCovariance: input.workingCovariance });
  const covariance = covarianceToOriginalScale(conditioning, sandwich.covariance);
  const beta = coefficientsToOriginalScale(conditioning, conditionedCoefficients);
  // Row a of T^{-1} (beta = T^{-1} gamma) is coefficient a's contrast in conditioned coordinates.
  const inverseTransformColumns = Array.from({ length: p }, (_, b) => coefficientsToOriginalScale(conditioning, Float64Array.from({ length: p }, (__, c) => (c === b ? 1 : 0))));
  const upper = 1 - (1 - confidenceLevel) / 2;
  const warnings: StatWarning[] = [];
  const coefficients: RobustCoefficient[] = columnNames.map((term, a) => {
    const variance = covariance[a * p + a]!;
    const contrast = inverseTransformColumns.map((column) => column[a]!);
    const df = sandwich.degreesOfFreedom(contrast);
    if (!(variance > 0) || !(df > 0) || !Number.isFinite(df)) {
      throw new ModelInputError(`the cluster-robust variance of '${term}' is ${variance > 0 ? "positive but its degrees of freedom are undefined" : "zero"}: the clusters carry no information about it`);
    }
    const standardError = Math.sqrt(variance);
    const statistic = beta[a]! / standardError;
    const critical = studentTQuantile(upper, df);
    return { term, estimate: beta[a]!, standardError, df, statistic, pValue: studentTTwoSidedP(statistic, df), ciLower: beta[a]! - critical * standardError, ciUpper: beta[a]! + critical * standardError };
  });
  const small = coefficients.filter((c) => c.df < SMALL_ROBUST_DF);
  if (small.length > 0) {
    warnings.push(
      warning(
        "few_clusters",
        `cluster-robust t tests of ${small.map((c) => `'${c.term}' (${c.df.toFixed(1)} df)`).join(", ")} have fewer than ${SMALL_ROBUST_DF} Satterthwaite degrees of freedom; Tipton (2015) finds such tests unreliable`,
      ),
    );
  }
  if (sandwich.singularClusters.length > 0) {
    const named = sandwich.singularClusters.slice(0, 5).map((j) => `'${clusters.names[j]}'`).join(", ");
    warnings.push(
      warning(
        "ill_conditioned_design",
        `cluster${sandwich.singularClusters.length > 1 ? "s" : ""} ${named}${sandwich.singularClusters.length > 5 ? ", ..." : ""} alone determine${sandwich.singularClusters.length > 1 ? "" : "s"} some combination of the coefficients, so the CR2 adjustment used a generalised inverse there (Pustejovsky & Tipton 2018); robust standard errors of those combinations are unreliable`,
      ),
    );
  }
  const sizes = clusters.rows.map((rows) => rows.length);
  return {
    inference: {
      method: "CR2",
      name: "cluster-robust (CR2)",
      description: CR2_DESCRIPTION,
      references: CR2_REFERENCES,
      cluster: input.clusterName,
      clusterCount: clusters.rows.length,
      smallestCluster: Math.min(...sizes),
      largestCluster: Math.max(...sizes),
      confidenceLevel,
      coefficients,
      covariance: Array.from(covariance),
    },
    warnings,
  };
}

/**
 * Adds CR2 inference to a single-level fit from fitMetaModel.
 * Input: the result, the MetaData and design it was fitted with (default intercept only), and the
 * clusters. Constraints: no case weights; at least two clusters; the design and data are the fit's.
 * Returns a new frozen result with `robust` set and the robust warnings appended.
 * Throws ModelInputError for case weights, a multilevel result (use the `cluster` option of
 * fitMultilevelModel), or a design that does not reproduce the fit; StudyInputError for bad labels.
 * Example: addClusterRobustInference(fitMetaModel(data), data, { name: "site", labels }).robust.coefficients[0].df.
 */
export function addClusterRobustInference(result: MetaModelResult, data: MetaData, cluster: ClusterSpec, design?: DesignMatrix): MetaModelResult {
  if (result.multilevel) throw new ModelInputError("a multilevel fit takes its clusters through the cluster option of fitMultilevelModel");
  if (data.caseWeights !== null) throw new ModelInputError("cluster-robust standard errors are not defined here for case-weighted studies; expand the weighted rows instead");
  const used = design ?? interceptOnly(data.k);
  if (used.rows !== data.k || used.columns !== result.p) throw new ModelInputError("the design does not match the fitted model");
  const conditioning = conditionDesign(used);
  const tau2 = result.heterogeneity.tau2;
  const fit = new WeightedFit({
    k: data.k,
    p: result.p,
    effectiveK: data.effectiveK,
    estimates: data.estimates,
    variances: data.variances,
    caseWeights: null,
    design: conditioning.data,
    logDetGram: conditioning.logDetGram,
  });
  fit.evaluate(tau2);
  const expected = result.linearPredictor.coefficients;
  fit.coefficients.forEach((value, a) => {
    if (!(Math.abs(value - expected[a]!) <= 1e-6 * (Math.abs(expected[a]!) + Math.sqrt(fit.inverse[a * result.p + a]!)))) {
      throw new ModelInputError("the design and data given do not reproduce the fitted coefficients; pass the ones the model was fitted with");
    }
  });
  const clusters = clusterRows(data.k, cluster);
  const { variances } = data;
  const { inference, warnings } = robustInference({
    conditioning,
    conditionedCoefficients: fit.coefficients,
    bread: fit.inverse,
    estimates: data.estimates,
    clusters,
    clusterName: cluster.name,
    confidenceLevel: result.confidenceLevel,
    workingCovariance: (rows) => {
      const n = rows.length;
      const phi = new Float64Array(n * n);
      for (let a = 0; a < n; a += 1) phi[a * n + a] = variances[rows[a]!]! + tau2;
      return phi;
    },
  });
  return freeze({ ...result, robust: inference, warnings: [...result.warnings, ...warnings] });
}
