/**
 * Cumulative meta-analysis: the studies are added in the order of a column (the year a site
 * joined the network, its latitude, ...), and the model is refitted after each addition.
 *
 * References:
 * - Lau, J., Antman, E. M., Jimenez-Silva, J., Kupelnick, B., Mosteller, F. & Chalmers, T. C.
 *   (1992). Cumulative meta-analysis of therapeutic trials for myocardial infarction. New England
 *   Journal of Medicine 327: 248-254.
 *
 * Studies with the same order value enter together, in one step (a step per distinct value), so
 * the result does not depend on the order of the rows in the file. Numeric values are ordered
 * numerically, text values by code unit. A step whose studies cannot yet be fitted (the first,
 * with one study) carries the reason instead of a fit; only failures with more studies than
 * coefficients are warned about. The last step is the fit to all studies.
 */
import { ModelInputError } from "../../model-error";
import type { StatWarning } from "../../warnings";
import { fitMetaModel } from "../fit-meta-model";
import type { MetaData } from "../meta-data";
import type { MetaModelResult } from "../meta-result";
import { fitSubset, refitWarnings, type RefitOutcome, type SensitivityFitOptions } from "./subset-fit";

export type OrderColumn =
  | { readonly kind: "numeric"; readonly name: string; readonly values: ArrayLike<number> }
  | { readonly kind: "text"; readonly name: string; readonly values: readonly string[] };

export interface CumulativeOptions extends SensitivityFitOptions {
  /** Add the largest values first. Default false (smallest first). */
  descending?: boolean;
}

export interface CumulativeStep {
  /** The order value of the studies added at this step. */
  readonly value: number | string;
  /** 0-based rows added at this step. */
  readonly added: readonly number[];
  /** Number of studies (rows) included so far. */
  readonly studies: number;
  readonly refit: RefitOutcome;
}

export interface CumulativeResult {
  readonly order: { readonly name: string; readonly kind: "numeric" | "text"; readonly descending: boolean };
  /** The fit to all studies (the last step's fit). */
  readonly full: MetaModelResult;
  readonly steps: readonly CumulativeStep[];
  readonly warnings: readonly StatWarning[];
}

function compareValues(a: number | string, b: number | string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

/**
 * Runs the cumulative analysis of `data` in the order of `order`.
 * Constraints: one order value per study; numeric values finite; text values non-empty.
 * Returns one step per distinct order value (ascending unless `descending`), each with the refit
 * of every study so far; the first steps are unavailable until enough studies are included.
 * Throws ModelInputError for a bad order column or when the full model cannot be fitted.
 * Example: cumulativeMetaAnalysis(data, { kind: "numeric", name: "year_joined", values: years })
 * .steps.at(-1).refit.fit is the fit to all studies.
 */
export function cumulativeMetaAnalysis(data: MetaData, order: OrderColumn, options: CumulativeOptions = {}): CumulativeResult {
  const { descending = false, ...fitOptions } = options;
  const { k } = data;
  if (order.values.length !== k) throw new ModelInputError(`${k} studies but ${order.values.length} values of the order column '${order.name}'`);
  const values: (number | string)[] = [];
  for (let i = 0; i < k; i += 1) {
    const value = order.values[i]!;
    if (order.kind === "numeric" && !Number.isFinite(value)) throw new ModelInputError(`study ${i + 1}: the order value '${order.name}' is ${value}; it must be a finite number`);
    if (order.kind === "text" && String(value).trim() === "") throw new ModelInputError(`study ${i + 1}: the order value '${order.name}' is empty; every study needs one`);
    values.push(value);
  }
  const full = fitMetaModel(data, fitOptions);
  const sign = descending ? -1 : 1;
  const sorted = Array.from({ length: k }, (_, i) => i).sort((a, b) => sign * compareValues(values[a]!, values[b]!) || a - b);
  const steps: CumulativeStep[] = [];
  let start = 0;
  while (start < k) {
    let end = start + 1;
    while (end < k && values[sorted[end]!] === values[sorted[start]!]) end += 1;
    const included = sorted.slice(0, end);
    const refit: RefitOutcome = end === k ? { available: true, fit: full } : fitSubset(data, included, fitOptions);
    steps.push({ value: values[sorted[start]!]!, added: sorted.slice(start, end), studies: end, refit });
    start = end;
  }
  const warnings = refitWarnings(
    steps.filter((step) => step.studies > full.p).map((step) => ({ label: String(step.value), refit: step.refit })),
    "of the cumulative steps",
  );
  return Object.freeze({ order: { name: order.name, kind: order.kind, descending }, full, steps: Object.freeze(steps), warnings });
}
