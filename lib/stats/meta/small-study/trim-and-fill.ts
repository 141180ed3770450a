/**
 * Trim-and-fill: how many estimates a funnel plot's asymmetry suggests are missing on one side,
 * which estimates would fill it, and how the pooled estimate changes with them. A sensitivity
 * analysis, not a correction: the filled estimates are what symmetry would imply, not data.
 *
 * References (formulas below quoted from memory of these papers):
 * - Duval, S. & Tweedie, R. (2000a). Trim and fill: a simple funnel-plot-based method of testing
 *   and adjusting for publication bias in meta-analysis. Biometrics 56: 455-463.
 * - Duval, S. & Tweedie, R. (2000b). A nonparametric "trim and fill" method of accounting for
 *   publication bias in meta-analysis. Journal of the American Statistical Association 95: 89-98
 *   (the estimators R0 and L0).
 *
 * Orientation: "missing on the left" means the small estimates are missing, so the unmatched
 * estimates are the largest ones, on the right (for missing on the right, mirror everything).
 * Iteration (Duval & Tweedie 2000a): start with k0 = 0; fit the model (the chosen tau^2 method) to
 * the n - k0 estimates left after removing the k0 largest; take the deviations d_i = y_i - centre
 * of all n estimates from that fit's pooled estimate; rank |d_i| (1 .. n, ties averaged); compute
 * the estimator and round it to the nearest integer >= 0 as the new k0; repeat until k0 repeats.
 *   L0 = [4 T_n - n(n + 1)] / (2n - 1), T_n the sum of the ranks of the d_i > 0 (Wilcoxon);
 *   R0 = gamma* - 1, gamma* the number of largest |d_i| that all have d_i > 0 (the rightmost run).
 * Fill: each of the k0 trimmed estimates is mirrored about the final centre, 2 centre - y_j, with
 * its own variance, and the model is fitted to the n + k0 estimates.
 * |d| within 1e-10 of the largest |d| of each other count as tied, and d = 0 is on neither side, so
 * an exactly mirrored funnel is recognised as symmetric. The side is given, or read from the sign
 * of Egger's intercept (positive: imprecise estimates lean to the right, so estimates are missing
 * on the left); that rule is ours, stated here.
 */
import { ModelInputError } from "../../model-error";
import { warning, type StatWarning } from "../../warnings";
import { fitMetaModel } from "../fit-meta-model";
import { metaData, type MetaData } from "../meta-data";
import type { MetaModelResult } from "../meta-result";
import { fitSubset, requireOneRowPerStudy, type SensitivityFitOptions } from "../sensitivity/subset-fit";
import { eggerTest } from "./egger-test";

export const TRIM_FILL_ESTIMATORS = ["l0", "r0"] as const;
export type TrimFillEstimator = (typeof TRIM_FILL_ESTIMATORS)[number];
export const FUNNEL_SIDES = ["left", "right"] as const;
export type FunnelSide = (typeof FUNNEL_SIDES)[number];

export const ESTIMATOR_FORMULAS: Readonly<Record<TrimFillEstimator, string>> = {
  l0: "L0 = [4 T_n - n(n + 1)] / (2n - 1), T_n the sum of the ranks of |y_i - centre| over the estimates on the side opposite the missing ones; rounded to the nearest integer >= 0 (Duval & Tweedie 2000b; quoted from memory).",
  r0: "R0 = gamma* - 1, gamma* the number of largest |y_i - centre| that all lie on the side opposite the missing ones; at least 0 (Duval & Tweedie 2000b; quoted from memory).",
};

export const TRIM_AND_FILL_NOTE =
  "Trim-and-fill is a sensitivity analysis, not a correction: the adjusted estimate shows what the pooled estimate would be if the funnel's asymmetry came from missing estimates on the stated side. Asymmetry has other causes (small-study effects, heterogeneity, chance), and the filled estimates are not data.";

export interface TrimAndFillOptions extends Omit<SensitivityFitOptions, "design"> {
  /** Default "l0". */
  estimator?: TrimFillEstimator;
  /** The side the missing estimates are assumed on. Default: from the sign of Egger's intercept. */
  side?: FunnelSide;
  /** One label per study (default "study 1", ...). */
  labels?: readonly string[];
  /** Limit on trim-and-refit rounds. Default 100. */
  maxSteps?: number;
}

export interface FilledEstimate {
  readonly label: string;
  readonly estimate: number;
  readonly standardError: number;
  readonly variance: number;
  /** 0-based row of the estimate it mirrors. */
  readonly mirrorOf: number;
}

export interface TrimAndFillResult {
  readonly available: true;
  readonly estimator: TrimFillEstimator;
  readonly estimatorFormula: string;
  /** The side the missing estimates are assumed on. */
  readonly side: FunnelSide;
  readonly sideChosenBy: "given" | "data";
  readonly sideReason: string;
  /** Estimated number of missing estimates. */
  readonly k0: number;
  /** The estimator's value before rounding, at the last round. */
  readonly estimatorValue: number;
  readonly steps: number;
  readonly converged: boolean;
  /** 0-based rows of the k0 trimmed estimates (the most extreme on the side opposite the missing). */
  readonly trimmed: readonly number[];
  /** The pooled estimate of the trimmed data, the centre of the mirroring. */
  readonly centre: number;
  readonly filled: readonly FilledEstimate[];
  /** The fit to the observed estimates. */
  readonly original: MetaModelResult;
  /** The fit to the observed and filled estimates (the observed fit when k0 = 0). */
  readonly adjusted: MetaModelResult;
  readonly notes: readonly string[];
  readonly warnings: readonly StatWarning[];
  readonly references: readonly string[];
}

/** Average ranks (1-based) of `magnitudes`, equal within `tolerance`; also the order, largest last. */
function averageRanks(magnitudes: Float64Array, tolerance: number): { ranks: Float64Array; order: number[]; groupEnd: Int32Array } {
  const n = magnitudes.length;
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => magnitudes[a]! - magnitudes[b]! || a - b);
  const ranks = new Float64Array(n);
  const groupEnd = new Int32Array(n);
  let start = 0;
  while (start < n) {
    let end = start + 1;
    while (end < n && magnitudes[order[end]!]! - magnitudes[order[start]!]! <= tolerance) end += 1;
    const rank = (start + 1 + end) / 2;
    for (let r = start; r < end; r += 1) {
      ranks[order[r]!] = rank;
      groupEnd[r] = end;
    }
    start = end;
  }
  return { ranks, order, groupEnd };
}

/**
 * The estimator's value for deviations `deviations` (oriented so that the missing estimates are on
 * the negative side). Example: deviations [-1, 2, 3] give ranks 1, 2, 3, T_n = 5, L0 = (20 - 12) / 5 = 1.6.
 */
export function trimFillEstimate(estimator: TrimFillEstimator, deviations: Float64Array): number {
  const n = deviations.length;
  let largest = 0;
  const magnitudes = deviations.map(Math.abs);
  for (const m of magnitudes) if (m > largest) largest = m;
  const tolerance = 1e-10 * largest;
  const positive = (i: number) => deviations[i]! > tolerance;
  const { ranks, order, groupEnd } = averageRanks(magnitudes, tolerance);
  if (estimator === "l0") {
    let rankSum = 0;
    for (let i = 0; i < n; i += 1) if (positive(i)) rankSum += ranks[i]!;
    return (4 * rankSum - n * (n + 1)) / (2 * n - 1);
  }
  // The rightmost run: whole tie groups from the top, while every member is positive.
  let run = 0;
  let end = n;
  while (end > 0) {
    let start = end - 1;
    while (start > 0 && groupEnd[start - 1] === end) start -= 1;
    let allPositive = true;
    for (let r = start; r < end; r += 1) if (!positive(order[r]!)) allPositive = false;
    if (!allPositive) break;
    run += end - start;
    end = start;
  }
  return run - 1;
}

function chooseSide(data: MetaData, given: FunnelSide | undefined, level: number): { side: FunnelSide; chosenBy: "given" | "data"; reason: string } {
  if (given !== undefined) return { side: given, chosenBy: "given", reason: `given: estimates assumed missing on the ${given}` };
  let intercept: number;
  try {
    intercept = eggerTest(data, level).intercept.estimate;
  } catch (error) {
    if (error instanceof ModelInputError) throw new ModelInputError(`the side of the missing estimates cannot be read from the data (${error.message}); give the side`);
    throw error;
  }
  const side: FunnelSide = intercept >= 0 ? "left" : "right";
  return {
    side,
    chosenBy: "data",
    reason: `from the data: Egger's intercept is ${intercept >= 0 ? "positive" : "negative"} (${intercept.toPrecision(4)}), imprecise estimates lean to the ${side === "left" ? "right" : "left"}, so estimates are assumed missing on the ${side}`,
  };
}

/**
 * Runs trim-and-fill on `data` with the chosen tau^2 method, test and estimator.
 * Constraints: k >= 3 studies without case weights (for the side from the data, Egger's test must
 * be computable); labels, if given, one per study; maxSteps a positive integer.
 * Returns k0 with the side, the trimmed rows, the filled estimates, the fits before and after
 * filling, whether the rounds converged, and the note that this is a sensitivity analysis.
 * Throws ModelInputError when the model cannot be fitted (before or after trimming) or the side
 * cannot be read from the data. (At most n - 2 estimates are ever trimmed: the centre is a weighted
 * mean of the estimates kept, so at least one deviation is <= 0, and R0 <= n - 2, L0 < n / 2 + 1.)
 * Example: on a funnel missing its three smallest estimates, trimAndFill(data).k0 is about 3.
 */
export function trimAndFill(data: MetaData, options: TrimAndFillOptions = {}): TrimAndFillResult {
  const { estimator = "l0", side: givenSide, labels, maxSteps = 100, ...fitOptions } = options;
  requireOneRowPerStudy(data, "trim-and-fill");
  if (!TRIM_FILL_ESTIMATORS.includes(estimator)) throw new ModelInputError(`estimator must be one of ${TRIM_FILL_ESTIMATORS.join(", ")}, got '${estimator}'`);
  if (givenSide !== undefined && !FUNNEL_SIDES.includes(givenSide)) throw new ModelInputError(`side must be left or right, got '${givenSide}'`);
  if (!Number.isInteger(maxSteps) || maxSteps < 1) throw new ModelInputError(`maxSteps must be a positive integer, got ${maxSteps}`);
  if (labels !== undefined && labels.length !== data.k) throw new ModelInputError(`${data.k} studies but ${labels.length} labels`);
  const n = data.k;
  if (n < 3) throw new ModelInputError(`trim-and-fill needs at least 3 studies (k = ${n})`);
  const original = fitMetaModel(data, fitOptions);
  const { side, chosenBy, reason } = chooseSide(data, givenSide, original.confidenceLevel);
  const orientation = side === "left" ? 1 : -1;
  // Rows from the most extreme on the trimmed side inwards.
  const extremeFirst = Array.from({ length: n }, (_, i) => i).sort((a, b) => orientation * (data.estimates[b]! - data.estimates[a]!) || a - b);
  const warnings: StatWarning[] = [];
  const deviations = new Float64Array(n);
  let k0 = 0;
  let centre = original.coefficients[0]!.estimate;
  let estimatorValue = Number.NaN;
  let steps = 0;
  let converged = false;
  let cycled = false;
  const seen = new Set<number>([0]);
  while (steps < maxSteps) {
    steps += 1;
    for (let i = 0; i < n; i += 1) deviations[i] = orientation * (data.estimates[i]! - centre);
    estimatorValue = trimFillEstimate(estimator, deviations);
    const next = Math.max(0, Math.round(estimatorValue));
    if (next === k0) {
      converged = true;
      break;
    }
    if (seen.has(next)) {
      warnings.push(warning("non_convergence", `trim-and-fill did not settle: k0 returned to ${next} after ${steps} rounds (it cycles); the last value, ${k0}, is reported`));
      cycled = true;
      break;
    }
    seen.add(next);
    k0 = next;
    const trimmedFit = fitSubset(data, extremeFirst.slice(k0).sort((a, b) => a - b), fitOptions);
    if (!trimmedFit.available) throw new ModelInputError(`trim-and-fill cannot be computed: the ${n - k0} estimates left after trimming ${k0} cannot be pooled (${trimmedFit.reason})`);
    if (!trimmedFit.fit.fit.converged) warnings.push(warning("non_convergence", `tau^2 did not converge in the fit after trimming ${k0} estimates`));
    centre = trimmedFit.fit.coefficients[0]!.estimate;
  }
  if (!converged && !cycled) warnings.push(warning("non_convergence", `trim-and-fill did not settle within ${maxSteps} rounds; the last k0 (${k0}) is reported`));
  const trimmed = extremeFirst.slice(0, k0);
  const filled: FilledEstimate[] = trimmed.map((row) => ({
    label: `filled (mirror of ${labels?.[row] ?? `study ${row + 1}`})`,
    estimate: 2 * centre - data.estimates[row]!,
    standardError: Math.sqrt(data.variances[row]!),
    variance: data.variances[row]!,
    mirrorOf: row,
  }));
  const adjusted =
    k0 === 0
      ? original
      : fitMetaModel(
          metaData({ estimates: [...data.estimates, ...filled.map((f) => f.estimate)], variances: [...data.variances, ...filled.map((f) => f.variance)] }),
          fitOptions,
        );
  return Object.freeze({
    available: true as const,
    estimator,
    estimatorFormula: ESTIMATOR_FORMULAS[estimator],
    side,
    sideChosenBy: chosenBy,
    sideReason: reason,
    k0,
    estimatorValue,
    steps,
    converged,
    trimmed: Object.freeze(trimmed),
    centre,
    filled: Object.freeze(filled),
    original,
    adjusted,
    notes: Object.freeze([TRIM_AND_FILL_NOTE]),
    warnings,
    references: [
      "Duval, S. & Tweedie, R. (2000). Biometrics 56: 455-463.",
      "Duval, S. & Tweedie, R. (2000). Journal of the American Statistical Association 95: 89-98.",
    ],
  });
}
