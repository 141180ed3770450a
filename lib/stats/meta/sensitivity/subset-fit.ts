/**
 * Refits of a meta-analysis on a subset of its studies, the building block of the leave-out,
 * influence, cumulative and subgroup analyses. A refit is an ordinary fitMetaModel call on the
 * chosen rows: the design rows are kept as they were coded for all studies (a centred moderator
 * stays centred at the full-data mean), so every refit's coefficients mean what the full fit's
 * mean. A subset that cannot be fitted gives the reason instead of a result.
 *
 * References:
 * - Viechtbauer, W. & Cheung, M. W.-L. (2010). Outlier and influence diagnostics for
 *   meta-analysis. Research Synthesis Methods 1: 112-125 (refitting with a study deleted,
 *   re-estimating tau^2 each time).
 */
import { designMatrix, type DesignMatrix } from "../../linear/design-matrix";
import { ModelInputError } from "../../model-error";
import { warning, type StatWarning } from "../../warnings";
import { fitMetaModel, type MetaModelOptions } from "../fit-meta-model";
import { metaData, type MetaData } from "../meta-data";
import type { MetaModelResult, Unavailable } from "../meta-result";

/** The model options every sensitivity analysis passes on to each of its fits. */
export type SensitivityFitOptions = Pick<MetaModelOptions, "method" | "test" | "design" | "confidenceLevel" | "maxIterations" | "tolerance">;

/** A refit, or why the subset cannot be fitted (e.g. one study left, a moderator level emptied). */
export type RefitOutcome = { readonly available: true; readonly fit: MetaModelResult } | Unavailable;

/**
 * The studies at `rows` (0-based, in the order given) as a new MetaData, case weights kept.
 * Input: valid distinct row indices, at least one. Throws StudyInputError (via metaData) for an
 * empty selection. Example: subsetMetaData(data, [0, 2]).estimates -> [y_1, y_3].
 */
export function subsetMetaData(data: MetaData, rows: ArrayLike<number>): MetaData {
  const n = rows.length;
  const estimates = new Float64Array(n);
  const variances = new Float64Array(n);
  const caseWeights = data.caseWeights === null ? undefined : new Float64Array(n);
  for (let r = 0; r < n; r += 1) {
    const i = rows[r]!;
    estimates[r] = data.estimates[i]!;
    variances[r] = data.variances[i]!;
    if (caseWeights) caseWeights[r] = data.caseWeights![i]!;
  }
  return metaData({ estimates, variances, caseWeights });
}

/** The design rows at `rows`, same columns. Example: subsetDesign(X, [1]).data is row 2 of X. */
export function subsetDesign(design: DesignMatrix, rows: ArrayLike<number>): DesignMatrix {
  const p = design.columns;
  const data = new Float64Array(rows.length * p);
  for (let r = 0; r < rows.length; r += 1) data.set(design.data.subarray(rows[r]! * p, rows[r]! * p + p), r * p);
  return designMatrix(rows.length, design.columnNames, data);
}

/** 0, 1, ..., k - 1 without the rows in `omit`. */
export function rowsWithout(k: number, omit: ReadonlySet<number>): Int32Array {
  const rows = new Int32Array(k - omit.size);
  let next = 0;
  for (let i = 0; i < k; i += 1) if (!omit.has(i)) rows[next++] = i;
  return rows;
}

/** Refuses case-weighted data, for analyses defined on one row per study (ranks, single-case deletion). */
export function requireOneRowPerStudy(data: MetaData, what: string): void {
  if (data.caseWeights !== null) throw new ModelInputError(`${what} needs each study listed once, without case weights`);
}

/**
 * Fits the model to the studies at `rows` with `options` (its design, if any, is the full-data
 * design and is cut to the same rows).
 * Returns the refit, or `{ available: false, reason }` when the subset cannot be fitted (the
 * ModelInputError's message, e.g. "one study pools nothing"). Other errors propagate.
 * Example: fitSubset(data, [0, 1, 2], { method: "dl" }).available is true for three valid studies.
 */
export function fitSubset(data: MetaData, rows: ArrayLike<number>, options: SensitivityFitOptions): RefitOutcome {
  if (rows.length === 0) return { available: false, reason: "no studies are left" };
  try {
    const subset = subsetMetaData(data, rows);
    const design = options.design === undefined ? undefined : subsetDesign(options.design, rows);
    return { available: true, fit: fitMetaModel(subset, { ...options, design }) };
  } catch (error) {
    if (error instanceof ModelInputError) return { available: false, reason: error.message };
    throw error;
  }
}

/** Warnings summarising refits that failed or did not converge, listing at most ten labels. */
export function refitWarnings(outcomes: readonly { label: string; refit: RefitOutcome }[], what: string): StatWarning[] {
  const list = (labels: string[]) => `${labels.slice(0, 10).join(", ")}${labels.length > 10 ? `, ... (${labels.length} in all)` : ""}`;
  const failed = outcomes.filter((o) => !o.refit.available).map((o) => o.label);
  const nonConverged = outcomes.filter((o) => o.refit.available && !o.refit.fit.fit.converged).map((o) => o.label);
  const warnings: StatWarning[] = [];
  if (failed.length > 0) warnings.push(warning("refit_unavailable", `${failed.length} refit(s) ${what} could not be computed (${list(failed)}); each says why`));
  if (nonConverged.length > 0) warnings.push(warning("non_convergence", `tau^2 did not converge in ${nonConverged.length} refit(s) ${what} (${list(nonConverged)})`));
  return warnings;
}
