import type { DesignMatrix } from "../stats/linear/design-matrix";
import { factorDesign } from "../stats/linear/treatment-contrasts";
import { fitGlm } from "../stats/glm/fit-glm";
import { fitFirthLogistic } from "../stats/glm/fit-firth-logistic";
import type { GlmResult } from "../stats/glm/glm-result";
import { ModelInputError } from "../stats/model-error";
import { warning, type StatWarning } from "../stats/warnings";
import type { BroodOutcome } from "./brood-outcomes";

/** The broods of one model: year, within-year mismatch c and the outcome, one entry per brood. */
export interface MismatchModelData {
  readonly year: Int32Array;
  readonly within: Float64Array;
  readonly response: Float64Array;
  /** Names the broods (e.g. "all", "successful"): models of the same broods and years share one design. */
  readonly broods: string;
}

/** Designs already built for one site, keyed by broods and years, so outcomes on the same broods share them. */
export type DesignCache = Map<string, DesignMatrix>;

export type MismatchGlmOutcome =
  | {
      readonly ok: true;
      readonly fit: GlmResult;
      /** Broods and years in the fitted model. */
      readonly n: number;
      readonly years: readonly number[];
      /** Why the plain maximum-likelihood fit was replaced by Firth's, if it was. */
      readonly firthReason: string | null;
      readonly warnings: readonly StatWarning[];
    }
  | { readonly ok: false; readonly reason: string };

function isBinary(outcome: BroodOutcome): boolean {
  return outcome.family.name === "binomial";
}

/**
 * Fits outcome ~ year (fixed factor, treatment contrasts) + c + c^2, or, for one year,
 * outcome ~ c + c^2, with the outcome's GLM family.
 *
 * Years in which a binary outcome never varies, or a count is 0 for every brood, are left out of
 * the multi-year model (with a warning): their year coefficient would diverge, and in the limit
 * they add nothing to the likelihood of c and c^2, so leaving them out gives the same c and c^2
 * estimates as the limit of the full fit. Under separation of a binary outcome the model is refitted
 * by Firth's penalised likelihood; a count model whose estimates diverge, any fit that did not
 * converge, and a quasi-Poisson fit with zero dispersion are refused with the reason.
 * `singleYear` fits require `minimumBroods` broods and both outcome values (binary) or some non-zero
 * count. Never throws for data problems: returns { ok: false, reason }.
 */
export function fitMismatchGlm(
  outcome: BroodOutcome,
  data: MismatchModelData,
  singleYear: boolean,
  minimumBroods: number,
  designs: DesignCache = new Map(),
): MismatchGlmOutcome {
  const warnings: StatWarning[] = [];
  const byYear = new Map<number, { count: number; sum: number; min: number; max: number }>();
  let entry: { count: number; sum: number; min: number; max: number } | undefined;
  let entryYear = Number.NaN;
  for (let i = 0; i < data.year.length; i += 1) {
    const year = data.year[i]!;
    if (year !== entryYear) {
      entry = byYear.get(year);
      if (!entry) byYear.set(year, (entry = { count: 0, sum: 0, min: Infinity, max: -Infinity }));
      entryYear = year;
    }
    const y = data.response[i]!;
    entry!.count += 1;
    entry!.sum += y;
    if (y < entry!.min) entry!.min = y;
    if (y > entry!.max) entry!.max = y;
  }
  const uninformative = (entry: { sum: number; min: number; max: number }) => (isBinary(outcome) ? entry.min === entry.max : entry.sum === 0);
  const why = (entry: { min: number }) => (isBinary(outcome) ? `every brood has outcome ${entry.min}` : "no brood has a non-zero count");
  let keep = [...byYear.keys()].sort((a, b) => a - b);
  if (singleYear) {
    const entry = byYear.get(keep[0]!);
    if (!entry || keep.length !== 1) return { ok: false, reason: "a single-year fit needs the broods of exactly one year" };
    if (entry.count < minimumBroods) return { ok: false, reason: `${entry.count} broods; a single-year fit needs at least ${minimumBroods}` };
    if (uninformative(entry)) return { ok: false, reason: `${why(entry)}; both outcome values must be present` };
  } else {
    const dropped = keep.filter((y) => uninformative(byYear.get(y)!));
    if (dropped.length) {
      warnings.push(
        warning(
          "data_dropped",
          `years left out (outcome does not vary within them, so their year effect is infinite and they carry no information on c): ${dropped
            .map((y) => `${y} (${why(byYear.get(y)!)})`)
            .join(", ")}`,
        ),
      );
      keep = keep.filter((y) => !dropped.includes(y));
    }
    if (keep.length === 0) return { ok: false, reason: `the outcome does not vary within any year (${why(byYear.values().next().value ?? { min: 0 })})` };
  }
  const kept = new Set(keep);
  // Plain loops over typed arrays: these models run over tens of thousands of broods.
  const allKept = kept.size === byYear.size;
  let response = data.response;
  let rows: Int32Array | null = null;
  if (!allKept) {
    let count = 0;
    for (let i = 0; i < data.year.length; i += 1) if (kept.has(data.year[i]!)) count += 1;
    rows = new Int32Array(count);
    response = new Float64Array(count);
    for (let i = 0, k = 0; i < data.year.length; i += 1) {
      if (!kept.has(data.year[i]!)) continue;
      rows[k] = i;
      response[k] = data.response[i]!;
      k += 1;
    }
  }
  const n = response.length;
  const designKey = `${data.broods}|${keep.join(",")}`;
  let design = designs.get(designKey);
  if (!design) {
    const years = rows ? new Int32Array(n) : data.year;
    const within = rows ? new Float64Array(n) : data.within;
    if (rows) {
      for (let k = 0; k < n; k += 1) {
        years[k] = data.year[rows[k]!]!;
        within[k] = data.within[rows[k]!]!;
      }
    }
    const squared = new Float64Array(n);
    for (let k = 0; k < n; k += 1) squared[k] = within[k]! * within[k]!;
    design = factorDesign("year", years, { c: within, c_squared: squared }, keep).design;
    designs.set(designKey, design);
  }
  let fit: GlmResult;
  try {
    fit = fitGlm(design, response, outcome.family, { dispersion: outcome.quasi ? "pearson" : "fixed" });
  } catch (error) {
    if (error instanceof ModelInputError) return { ok: false, reason: error.message };
    throw error;
  }
  let firthReason: string | null = null;
  if (fit.separation.kind !== "none") {
    const what = `${fit.separation.kind === "complete" ? "complete" : "quasi-complete"} separation`;
    if (!isBinary(outcome)) return { ok: false, reason: `${what}: fitted means tend to 0 and the maximum-likelihood estimate does not exist` };
    const firth = fitFirthLogistic(design, response, { diagnosis: fit.separation });
    if (!firth.converged) return { ok: false, reason: `${what}, and the Firth penalised fit did not converge` };
    firthReason = `${what} of the outcome by the predictors (${fit.separation.boundaryObservations} of ${fit.n} broods with fitted probability 0 or 1): the maximum-likelihood estimate does not exist`;
    warnings.push(...fit.warnings.filter((w) => w.code === "separation"));
    fit = firth;
  }
  if (!fit.converged) return { ok: false, reason: `the fit did not converge (${fit.warnings.map((w) => w.message).join("; ")})` };
  // Zero to rounding: Pearson's X^2 is a sum of squared residuals that can only be 0 at an exact fit.
  if (outcome.quasi && !(fit.pearsonChiSquare > 1e-10 * fit.n)) return { ok: false, reason: "the Pearson dispersion is 0 (every count fitted exactly): quasi-Poisson standard errors are not usable" };
  // Every coefficient, not only c and c^2: an estimate is never stored without its standard error.
  const bad = fit.standardErrors.findIndex((se) => se === null || !(se > 0 && Number.isFinite(se)));
  if (bad >= 0) {
    const unavailable = fit.warnings.find((w) => w.code === "wald_unavailable");
    return { ok: false, reason: `no finite standard error for ${fit.coefficientNames[bad]}${unavailable ? ` (${unavailable.message})` : ""}` };
  }
  warnings.push(...fit.warnings.filter((w) => w.code !== "separation"));
  return { ok: true, fit, n, years: keep, firthReason, warnings };
}
