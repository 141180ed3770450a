/**
 * Outlier and influence diagnostics for each estimate of a random-effects model or meta-regression,
 * by case deletion with tau^2 re-estimated, and the coordinates of Baujat's plot.
 *
 * References:
 * - Viechtbauer, W. & Cheung, M. W.-L. (2010). Outlier and influence diagnostics for
 *   meta-analysis. Research Synthesis Methods 1: 112-125 (the measures below, and the rules of
 *   thumb for flagging, carried over from linear regression).
 * - Belsley, D. A., Kuh, E. & Welsch, R. E. (1980). Regression Diagnostics. Wiley (DFFITS,
 *   DFBETAS, covariance ratio, hat values and their cut-offs).
 * - Cook, R. D. (1977). Detection of influential observation in linear regression. Technometrics
 *   19: 15-18.
 * - Baujat, B. et al. (2002). Statistics in Medicine 21: 2641-2652 (see baujat.ts).
 *
 * Notation: the model fitted to all k studies has tau^2, b, C = (X'WX)^{-1} with
 * W = diag(1 / (v_i + tau^2)), hat values h_i = w_i x_i' C x_i; the refit without study i has
 * tau2_(i), b_(i), C_(i) (tau^2 re-estimated by the same method). Viechtbauer & Cheung (2010):
 *   studentized deleted residual  t_i = (y_i - x_i' b_(i)) / sqrt(v_i + tau2_(i) + x_i' C_(i) x_i),
 *   DFFITS_i = (x_i' b - x_i' b_(i)) / sqrt(h_i (tau2_(i) + v_i)),
 *   Cook's distance D_i = (b - b_(i))' (X'WX) (b - b_(i)),
 *   covariance ratio COVRATIO_i = det C_(i) / det C,
 *   DFBETAS_ij = (b_j - b_(i)j) / sqrt(C_(i)jj),
 *   and tau2_(i), its change tau2_(i) - tau2, and Q (Q_E) without study i.
 * Every covariance here is the model-based one, (X'WX)^{-1}, as Viechtbauer & Cheung define the
 * measures; the Knapp-Hartung scaling does not enter. Comparisons are made in the full fit's
 * internal coordinates (refit-coordinates.ts).
 */
import { choleskyFactor, choleskyLogDeterminant, choleskySolve } from "../../linear/cholesky";
import { chiSquareQuantile } from "../../distributions/chi-square";
import { normalQuantileStd } from "../../distributions/normal";
import { ModelInputError } from "../../model-error";
import type { StatWarning } from "../../warnings";
import { fitMetaModel } from "../fit-meta-model";
import type { MetaData } from "../meta-data";
import type { MetaModelResult, Unavailable } from "../meta-result";
import { baujatCoordinates, type BaujatCoordinates } from "./baujat";
import { deletionRefits, type DeletionRefit } from "./deletion-refits";
import { checkStudyNames, studyLabel } from "./study-names";
import { refitWarnings, requireOneRowPerStudy, type SensitivityFitOptions } from "./subset-fit";

export interface InfluenceOptions extends Omit<SensitivityFitOptions, "test"> {
  /** One label per study for the output (default "study 1", ...). */
  labels?: readonly string[];
}

export type InfluenceMeasure = "studentized_deleted_residual" | "dffits" | "cooks_distance" | "hat" | "dfbetas";

/** A flagging rule, with its threshold for this fit and where it comes from. */
export interface InfluenceRule {
  readonly measure: InfluenceMeasure;
  /** "outlier" rules flag a poorly fitted estimate; "influential" rules one that moves the fit. */
  readonly flags: "outlier" | "influential";
  readonly rule: string;
  readonly threshold: number;
  readonly source: string;
  readonly status: "common practice";
}

export interface DeletedDiagnostics {
  readonly available: true;
  readonly studentizedDeletedResidual: number;
  readonly dffits: number;
  readonly cooksDistance: number;
  readonly covarianceRatio: number;
  /** tau^2 of the refit without the study. */
  readonly tau2Deleted: number;
  /** tau2_(i) - tau^2. */
  readonly tau2Change: number;
  /** Q (Q_E with moderators) without the study. */
  readonly qDeleted: number;
  /** One per coefficient, in coefficient order. */
  readonly dfbetas: readonly number[];
  /** The refit's coefficient estimates, in coefficient order. */
  readonly coefficientsDeleted: readonly number[];
  /** Whether the refit's tau^2 converged. */
  readonly converged: boolean;
}

export interface StudyInfluence {
  readonly label: string;
  readonly weightPercent: number;
  readonly leverage: number;
  readonly residual: number;
  /** Internally standardized residual of the full fit; null where leverage is 1. */
  readonly standardizedResidual: number | null;
  readonly deleted: DeletedDiagnostics | Unavailable;
  /** |t_i| beyond its cut-off. */
  readonly outlier: boolean;
  /** Any influence rule met. */
  readonly influential: boolean;
  /** The measures whose rules this study meets. */
  readonly flaggedBy: readonly InfluenceMeasure[];
}

export interface InfluenceResult {
  /** The model fitted to all studies (Wald z: the model-based covariance). */
  readonly full: MetaModelResult;
  readonly rules: readonly InfluenceRule[];
  readonly studies: readonly StudyInfluence[];
  readonly baujat: BaujatCoordinates;
  readonly warnings: readonly StatWarning[];
}

const RULE_SOURCE = "Viechtbauer & Cheung (2010), after Belsley, Kuh & Welsch (1980) and Cook (1977); a rule of thumb (common practice), quoted from memory";

/**
 * The flagging rules for a fit with p coefficients to k studies.
 * Example: influenceRules(13, 1) has DFFITS threshold 3 sqrt(1/12) = 0.866 and hat threshold 3/13.
 */
export function influenceRules(k: number, p: number): InfluenceRule[] {
  const common = { source: RULE_SOURCE, status: "common practice" as const };
  const z = normalQuantileStd(0.975);
  return [
    { measure: "studentized_deleted_residual", flags: "outlier", rule: `|t_i| > ${z.toFixed(3)} (the standard normal 97.5% quantile; t_i is about N(0, 1) under the model)`, threshold: z, ...common },
    { measure: "dffits", flags: "influential", rule: "|DFFITS_i| > 3 sqrt(p / (k - p))", threshold: 3 * Math.sqrt(p / (k - p)), ...common },
    { measure: "cooks_distance", flags: "influential", rule: "D_i > the median of chi-square(p)", threshold: chiSquareQuantile(0.5, p), ...common },
    { measure: "hat", flags: "influential", rule: "h_i > 3 p / k (three times the mean hat value)", threshold: (3 * p) / k, ...common },
    { measure: "dfbetas", flags: "influential", rule: "|DFBETAS_ij| > 1 for some coefficient j", threshold: 1, ...common },
  ];
}

function deletedDiagnostics(data: MetaData, full: MetaModelResult, fullCovariance: ReturnType<typeof choleskyFactor>, i: number, deletion: DeletionRefit): DeletedDiagnostics | Unavailable {
  if (!deletion.available) return { available: false, reason: `the model without this study cannot be fitted: ${deletion.reason}` };
  const { fit: refit, comparison } = deletion;
  const p = full.p;
  const tau2Deleted = refit.heterogeneity.tau2;
  const variance = data.variances[i]!;
  const leverage = full.studies.leverage[i]!;
  const studentized = (data.estimates[i]! - comparison.fittedDeleted) / Math.sqrt(variance + tau2Deleted + comparison.varianceDeleted);
  const dffits = (comparison.fitted - comparison.fittedDeleted) / Math.sqrt(leverage * (tau2Deleted + variance));
  const shift = new Float64Array(p);
  for (let j = 0; j < p; j += 1) shift[j] = full.linearPredictor.coefficients[j]! - comparison.refit.coefficients[j]!;
  if (!fullCovariance.ok) throw new Error("internal: the full model's covariance is not positive definite");
  const solved = choleskySolve(fullCovariance.factor, shift);
  let cooksDistance = 0;
  for (let j = 0; j < p; j += 1) cooksDistance += shift[j]! * solved[j]!;
  const refitCovariance = choleskyFactor(comparison.refit.covariance, p, 1e-14);
  if (!refitCovariance.ok) return { available: false, reason: "the covariance of the coefficients without this study is singular" };
  const covarianceRatio = Math.exp(choleskyLogDeterminant(refitCovariance.factor) - choleskyLogDeterminant(fullCovariance.factor));
  const dfbetas = full.coefficients.map((c, j) => (c.estimate - refit.coefficients[j]!.estimate) / refit.coefficients[j]!.standardError);
  const values = [studentized, dffits, cooksDistance, covarianceRatio, ...dfbetas];
  if (!values.every(Number.isFinite)) return { available: false, reason: "the deletion diagnostics are not finite numbers here (a study with zero leverage or an exact fit)" };
  return {
    available: true,
    studentizedDeletedResidual: studentized,
    dffits,
    cooksDistance,
    covarianceRatio,
    tau2Deleted,
    tau2Change: tau2Deleted - full.heterogeneity.tau2,
    qDeleted: refit.heterogeneity.q,
    dfbetas,
    coefficientsDeleted: refit.coefficients.map((c) => c.estimate),
    converged: refit.fit.converged,
  };
}

/**
 * Computes every diagnostic for every study, with flags by the rules of influenceRules().
 * Constraints: k >= p + 2 studies (each refit needs k - 1 > p), without case weights; `labels`,
 * if given, one per study.
 * Returns the full fit (z test), the rules, one StudyInfluence per study, the Baujat coordinates
 * and warnings for refits that failed or did not converge. A study whose refit cannot be computed
 * (e.g. the only study at a moderator level) has `deleted` unavailable with the reason, and is
 * flagged only by its hat value.
 * Throws ModelInputError when the full model cannot be fitted, k < p + 2, or for case weights.
 * Example: influenceDiagnostics(bcg).studies[6].deleted.studentizedDeletedResidual for trial 7.
 */
export function influenceDiagnostics(data: MetaData, options: InfluenceOptions = {}): InfluenceResult {
  const { labels, ...rest } = options;
  requireOneRowPerStudy(data, "single-case deletion diagnostics");
  checkStudyNames(data.k, labels, "labels");
  const fitOptions: SensitivityFitOptions = { ...rest, test: "z" };
  const full = fitMetaModel(data, fitOptions);
  const p = full.p;
  if (data.k < p + 2) {
    throw new ModelInputError(`influence diagnostics refit the model without each study, which needs k - 1 > p: at least ${p + 2} studies for ${p} coefficient(s), got ${data.k}`);
  }
  const names = Array.from({ length: data.k }, (_, i) => studyLabel(labels, i));
  const deletions = deletionRefits(data, full, fitOptions);
  const commonEffect = full.method.method === "fe" ? full : fitMetaModel(data, { ...fitOptions, method: "fe" });
  const commonDeletions = commonEffect === full ? deletions : deletionRefits(data, commonEffect, { ...fitOptions, method: "fe" });
  const rules = influenceRules(data.k, p);
  const threshold = (measure: InfluenceMeasure) => rules.find((r) => r.measure === measure)!.threshold;
  const fullCovariance = choleskyFactor(Float64Array.from(full.linearPredictor.covariance), p, 1e-14);
  const studies: StudyInfluence[] = names.map((label, i) => {
    const deleted = deletedDiagnostics(data, full, fullCovariance, i, deletions[i]!);
    const leverage = full.studies.leverage[i]!;
    const flaggedBy: InfluenceMeasure[] = [];
    if (deleted.available) {
      if (Math.abs(deleted.studentizedDeletedResidual) > threshold("studentized_deleted_residual")) flaggedBy.push("studentized_deleted_residual");
      if (Math.abs(deleted.dffits) > threshold("dffits")) flaggedBy.push("dffits");
      if (deleted.cooksDistance > threshold("cooks_distance")) flaggedBy.push("cooks_distance");
    }
    if (leverage > threshold("hat")) flaggedBy.push("hat");
    if (deleted.available && deleted.dfbetas.some((value) => Math.abs(value) > threshold("dfbetas"))) flaggedBy.push("dfbetas");
    const standardized = full.studies.standardizedResiduals[i]!;
    return {
      label,
      weightPercent: full.studies.weightPercent[i]!,
      leverage,
      residual: full.studies.residuals[i]!,
      standardizedResidual: Number.isFinite(standardized) ? standardized : null,
      deleted,
      outlier: flaggedBy.includes("studentized_deleted_residual"),
      influential: flaggedBy.some((measure) => measure !== "studentized_deleted_residual"),
      flaggedBy,
    };
  });
  const warnings = refitWarnings(deletions.map((refit, i) => ({ label: names[i]!, refit })), "without one study");
  return Object.freeze({
    full,
    rules: Object.freeze(rules),
    studies: Object.freeze(studies),
    baujat: baujatCoordinates(data, commonEffect, commonDeletions, names),
    warnings,
  });
}
