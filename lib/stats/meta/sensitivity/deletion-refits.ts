/**
 * The model refitted without each study in turn, each refit compared with the full fit at the
 * deleted study's own design row: the raw material of the case-deletion diagnostics.
 *
 * References:
 * - Viechtbauer, W. & Cheung, M. W.-L. (2010). Outlier and influence diagnostics for
 *   meta-analysis. Research Synthesis Methods 1: 112-125.
 * - Cook, R. D. & Weisberg, S. (1982). Residuals and Influence in Regression. Chapman & Hall
 *   (case deletion).
 */
import { interceptOnly } from "../../linear/design-matrix";
import { rowToConditionedScale } from "../design-conditioning";
import type { MetaData } from "../meta-data";
import type { MetaModelResult, Unavailable } from "../meta-result";
import { compareAtRow, type DeletionComparison } from "./refit-coordinates";
import { fitSubset, rowsWithout, type SensitivityFitOptions } from "./subset-fit";

export type DeletionRefit = { readonly available: true; readonly fit: MetaModelResult; readonly comparison: DeletionComparison } | Unavailable;

/**
 * Refits `full` (fitted to `data` with `options`) once without each study.
 * Returns one entry per study: the refit and its comparison at the study's row, or the reason the
 * refit cannot be computed. Example: for k studies, k refits on k - 1 studies each.
 */
export function deletionRefits(data: MetaData, full: MetaModelResult, options: SensitivityFitOptions): DeletionRefit[] {
  const design = options.design ?? interceptOnly(data.k);
  const p = design.columns;
  const coordinates = { columns: p, ...full.linearPredictor };
  const refits: DeletionRefit[] = [];
  for (let i = 0; i < data.k; i += 1) {
    const outcome = fitSubset(data, rowsWithout(data.k, new Set([i])), options);
    if (!outcome.available) {
      refits.push(outcome);
      continue;
    }
    const row = rowToConditionedScale(coordinates, design.data.subarray(i * p, i * p + p));
    refits.push({ available: true, fit: outcome.fit, comparison: compareAtRow(full.linearPredictor, outcome.fit.linearPredictor, row) });
  }
  return refits;
}
