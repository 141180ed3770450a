/**
 * One site's comparable estimates from its raw brood records: within-year effects of mismatch on
 * four brood outcomes (site-level and per year), between-year effects, and selection gradients on
 * lay date. Pure: data in, estimate objects out.
 *
 * References:
 * - van de Pol, M. & Wright, J. (2009). Animal Behaviour 77: 753-758 (within-year centring).
 * - McCullagh, P. & Nelder, J. A. (1989). Generalized Linear Models, 2nd ed. (GLMs, quasi-Poisson).
 * - Firth, D. (1993). Biometrika 80: 27-38 (penalised likelihood under separation).
 * - Lande, R. & Arnold, S. J. (1983). Evolution 37: 1210-1226 (selection gradients).
 */
import { designMatrix } from "../stats/linear/design-matrix";
import { coefficientOf, type GlmResult } from "../stats/glm/glm-result";
import { ModelInputError } from "../stats/model-error";
import { fitWeightedLeastSquares } from "../stats/regression/fit-weighted-least-squares";
import { selectionGradientSteps } from "../stats/selection/fit-selection-gradients";
import { OUTCOME_LABELS } from "../format/vocabulary-labels";
import { asPhase, runToCompletion, type Stepwise } from "../stats/stepwise";
import { warning, type StatWarning } from "../stats/warnings";
import { BROOD_OUTCOMES, type BroodOutcome } from "./brood-outcomes";
import type { BroodForEstimates, ComputedEstimate, RefusedEstimate } from "./estimate-types";
import { fitMismatchGlm, type DesignCache, type MismatchModelData } from "./fit-mismatch-glm";
import { centredMismatch } from "./centred-mismatch";
import { describeMismatch, DEFAULT_MISMATCH_OFFSET_DAYS, DEFAULT_NESTLING_AGE_AT_PEAK_DEMAND_DAYS, type MismatchBasis } from "./mismatch";

export interface SiteEstimateOptions {
  /** Mismatch from the lay date (default) or from the hatch date. */
  basis?: MismatchBasis;
  /** Lay-date offset, days. Default 30 (network setting mismatch_offset_days). */
  offsetDays?: number;
  /** Nestling age at peak demand for hatch-date mismatch, days. Default 9. */
  nestlingAgeDays?: number;
  /** Fewest broods for a single-year fit. Default 20. */
  minimumBroodsPerYear?: number;
  /** Compute selection gradients (bootstrap). Default true. */
  selectionGradients?: boolean;
  /** Bootstrap replicates of the selection gradients. Default 1000. */
  bootstrapReplicates?: number;
  /** Seed of the bootstrap. Default 1. */
  seed?: number;
}

export interface SiteEstimates {
  readonly estimates: readonly ComputedEstimate[];
  readonly refused: readonly RefusedEstimate[];
  /** Problems with the site's data as a whole (e.g. years without a food-peak date). */
  readonly warnings: readonly StatWarning[];
  readonly broodsUsed: number;
  readonly yearsUsed: readonly number[];
  readonly offsetDays: number;
  readonly basis: MismatchBasis;
}

/** Fewest broods of a year for its own single-year estimates (common practice: fewer give unstable fits). */
export const DEFAULT_MINIMUM_BROODS_PER_YEAR = 20;

const CENTRING = "within-year mismatch c = mismatch - the site-year's mean mismatch over all its broods; annual mean mismatch = that mean (within-subject centring, van de Pol & Wright 2009)";
const DATES = "dates as day of year (1 = 1 January)";

function glmModelText(outcome: BroodOutcome, fit: GlmResult, singleYear: number | null, years: readonly number[], firthReason: string | null): string {
  const predictors = singleYear === null ? "year (fixed factor, treatment contrasts, first year reference) + c + c^2" : `c + c^2, broods of ${singleYear} only`;
  const family = outcome.family.name === "binomial" ? "binomial GLM, logit link" : "Poisson GLM, log link";
  const estimator = firthReason
    ? `Firth-penalised likelihood (Firth 1993), used because of ${firthReason}`
    : "maximum likelihood by iteratively reweighted least squares";
  const se = firthReason
    ? "Wald, from the inverse information at the penalised estimate"
    : outcome.quasi
      ? `Wald, from the inverse Fisher information scaled by sqrt(Pearson dispersion) (quasi-Poisson); dispersion = ${fit.dispersion.toPrecision(4)} on ${fit.residualDf} df`
      : "Wald, from the inverse Fisher information";
  const yearsText = singleYear === null ? `${years.length} years (${years[0]}-${years[years.length - 1]})` : `year ${singleYear}`;
  return `Model: ${outcome.description} ~ ${predictors}; ${family}; ${estimator}. SE: ${se}. n = ${fit.n} broods in ${yearsText}; deviance ${fit.deviance.toPrecision(6)} on ${fit.residualDf} df.`;
}

function withWarnings(method: string, warnings: readonly StatWarning[]): string {
  return warnings.length ? `${method} Warnings: ${warnings.map((w) => w.message).join("; ")}.` : method;
}

/**
 * Computes every estimate of one site.
 * Input: the site's broods (days of year) and its food-peak dates by year. Broods of years without
 * a food peak are left out of the mismatch models (warning); selection gradients use all broods.
 * Returns the estimates (each with SE, n, link, scale, method and warnings) and the estimates that
 * could not be computed with the reason. Throws ModelInputError when no brood can be used at all.
 * Example: computeSiteEstimates(broods, new Map([[2019, 140]]), { offsetDays: 30 }).
 */
export function computeSiteEstimates(
  broods: readonly BroodForEstimates[],
  foodPeaks: ReadonlyMap<number, number>,
  options: SiteEstimateOptions = {},
): SiteEstimates {
  return runToCompletion(siteEstimateSteps(broods, foodPeaks, options));
}

/**
 * Time of one bootstrap replicate of the selection gradients relative to one pass of the mismatch
 * GLMs over the same broods, for progress only. Measured on 90,000 simulated broods in 30 years:
 * the 8 GLM passes took about 0.65 s, 1,000 replicates about 14 s.
 */
const REPLICATE_WORK_PER_GLM_PASS = 0.2;

/**
 * computeSiteEstimates as a stepwise computation (lib/stats/stepwise.ts): a step after each model
 * fit and each block of bootstrap replicates, with the fraction of the site's work done. The
 * estimates are the same however the steps are driven.
 */
export function* siteEstimateSteps(
  broods: readonly BroodForEstimates[],
  foodPeaks: ReadonlyMap<number, number>,
  options: SiteEstimateOptions = {},
): Stepwise<SiteEstimates> {
  const basis = options.basis ?? "lay_date";
  const offsetDays = basis === "lay_date" ? (options.offsetDays ?? DEFAULT_MISMATCH_OFFSET_DAYS) : (options.nestlingAgeDays ?? DEFAULT_NESTLING_AGE_AT_PEAK_DEMAND_DAYS);
  const minimumBroods = options.minimumBroodsPerYear ?? DEFAULT_MINIMUM_BROODS_PER_YEAR;
  if (!Number.isFinite(offsetDays)) throw new ModelInputError(`the mismatch offset must be a finite number of days, got ${offsetDays}`);
  if (broods.length === 0) throw new ModelInputError("the site has no brood records");
  const definition = { basis, offsetDays };
  const siteWarnings: StatWarning[] = [];

  const { usable, yearOf, centred, yearsUsed, yearsWithoutFoodPeak, broodsWithoutHatchDate } = centredMismatch(broods, foodPeaks, definition);
  if (yearsWithoutFoodPeak.length) {
    siteWarnings.push(warning("data_dropped", `no food-peak date for ${yearsWithoutFoodPeak.join(", ")}: those broods are left out of the mismatch estimates`));
  }
  if (broodsWithoutHatchDate) siteWarnings.push(warning("data_dropped", `${broodsWithoutHatchDate} broods without a hatch date are left out of the hatch-date mismatch estimates`));

  const estimates: ComputedEstimate[] = [];
  const refused: RefusedEstimate[] = [];
  const definitions = `Definitions: ${describeMismatch(definition)}; ${CENTRING}; ${DATES}.`;

  // Each usable brood's position among the sorted years, for grouping without per-brood maps.
  const yearSlotOf = new Map(yearsUsed.map((year, slot) => [year, slot]));
  const slotOf = new Int32Array(usable.length);
  for (let i = 0; i < usable.length; i += 1) slotOf[i] = yearSlotOf.get(yearOf[i]!)!;

  // Progress: the mismatch models first (one step per fit), then the bootstrap of the gradients.
  const withSelection = options.selectionGradients ?? true;
  const replicates = options.bootstrapReplicates ?? 1000;
  const glmPasses = 2 * BROOD_OUTCOMES.length; // each outcome: all years together, then year by year
  const mismatchShare = withSelection ? glmPasses / (glmPasses + REPLICATE_WORK_PER_GLM_PASS * replicates) : 1;
  const fitsPerOutcome = 1 + yearsUsed.length;
  const totalFits = BROOD_OUTCOMES.length * fitsPerOutcome;

  const designs: DesignCache = new Map();
  const selected = new Int32Array(usable.length);
  for (const [outcomeIndex, outcome] of BROOD_OUTCOMES.entries()) {
    let count = 0;
    for (let i = 0; i < usable.length; i += 1) if (outcome.includes(usable[i]!)) selected[count++] = i;
    const data: MismatchModelData = {
      year: new Int32Array(count),
      within: new Float64Array(count),
      response: new Float64Array(count),
      broods: outcome.broods,
    };
    // Per year (by slot): number of broods and sum of the outcome; then the broods' positions grouped by year.
    const broodsInYear = new Int32Array(yearsUsed.length);
    const outcomeSum = new Float64Array(yearsUsed.length);
    for (let k = 0; k < count; k += 1) {
      const i = selected[k]!;
      data.year[k] = yearOf[i]!;
      data.within[k] = centred.within[i]!;
      data.response[k] = outcome.response(usable[i]!);
      broodsInYear[slotOf[i]!] += 1;
      outcomeSum[slotOf[i]!] += data.response[k]!;
    }
    const yearStart = new Int32Array(yearsUsed.length + 1);
    for (let slot = 0; slot < yearsUsed.length; slot += 1) yearStart[slot + 1] = yearStart[slot]! + broodsInYear[slot]!;
    const byYear = new Int32Array(count);
    const cursor = yearStart.slice(0, yearsUsed.length);
    for (let k = 0; k < count; k += 1) byYear[cursor[slotOf[selected[k]!]!]!++] = k;
    const link = outcome.family.link;
    const record = (slot: number | null) => {
      const year = slot === null ? null : yearsUsed[slot]!;
      const subset = slot === null ? data : subsetRows(data, byYear.subarray(yearStart[slot]!, yearStart[slot + 1]!), year!);
      const result = count ? fitMismatchGlm(outcome, subset, year !== null, minimumBroods, designs) : ({ ok: false, reason: "no broods for this outcome" } as const);
      if (!result.ok) {
        refused.push({ outcome: outcome.name, level: "within_year", year, reason: result.reason });
        return;
      }
      const method = `${definitions} ${glmModelText(outcome, result.fit, year, result.years, result.firthReason)}`;
      for (const [term, name] of [["linear", "c"], ["quadratic", "c_squared"]] as const) {
        const { estimate, standardError } = coefficientOf(result.fit, name);
        const termText = term === "linear" ? "This estimate: the coefficient of c (per day of within-year mismatch, on the link scale)." : "This estimate: the coefficient of c^2 (per day squared, on the link scale; scale per day as stored).";
        estimates.push({
          outcome: outcome.name,
          level: "within_year",
          term,
          year,
          estimate,
          se: standardError,
          n: result.n,
          link,
          scale: "per_day",
          method: withWarnings(`${method} ${termText}`, result.warnings),
          warnings: result.warnings,
        });
      }
    };
    const step = (fitsDone: number, what: string) => ({
      fraction: (mismatchShare * fitsDone) / totalFits,
      message: `fitting ${OUTCOME_LABELS[outcome.name].toLowerCase()}, ${what} (${fitsDone} of ${totalFits} models)`,
    });
    record(null);
    yield step(outcomeIndex * fitsPerOutcome + 1, "all years");
    for (let slot = 0; slot < yearsUsed.length; slot += 1) {
      if (broodsInYear[slot]! === 0) continue;
      record(slot);
      yield step(outcomeIndex * fitsPerOutcome + 2 + slot, String(yearsUsed[slot]));
    }

    // Between-year effect: annual mean outcome on annual mean mismatch, weighted by broods.
    const perYear = new Map<number, { count: number; sum: number }>();
    yearsUsed.forEach((year, slot) => {
      if (broodsInYear[slot]! > 0) perYear.set(year, { count: broodsInYear[slot]!, sum: outcomeSum[slot]! });
    });
    const betweenYears = [...perYear.keys()].sort((a, b) => a - b);
    if (betweenYears.length < 3) {
      refused.push({ outcome: outcome.name, level: "between_year", year: null, reason: `${betweenYears.length} years with broods; a between-year slope with a standard error needs at least 3` });
      continue;
    }
    try {
      const x = new Float64Array(2 * betweenYears.length);
      betweenYears.forEach((y, k) => {
        x[2 * k] = 1;
        x[2 * k + 1] = centred.groupMeans.get(y)!;
      });
      const fit = fitWeightedLeastSquares(designMatrix(betweenYears.length, ["intercept", "annual_mean_mismatch"], x), betweenYears.map((y) => perYear.get(y)!.sum / perYear.get(y)!.count), {
        weights: betweenYears.map((y) => perYear.get(y)!.count),
      });
      if (!(fit.standardErrors[1]! > 0)) throw new ModelInputError("the annual means lie exactly on a line: residual variance 0, no usable standard error");
      estimates.push({
        outcome: outcome.name,
        level: "between_year",
        term: "linear",
        year: null,
        estimate: fit.coefficients[1]!,
        se: fit.standardErrors[1]!,
        n: betweenYears.length,
        link: "identity",
        scale: "per_day",
        method:
          `${definitions} Model: ${outcome.annualMean} per year ~ annual mean mismatch, weighted least squares with the number of broods in the year's mean as weights; ` +
          `this estimate is the slope (change in the annual mean per day of annual mean mismatch). SE: classical least-squares SE on ${fit.residualDf} df (residual variance estimated). ` +
          `n = ${betweenYears.length} years (${data.year.length} broods).`,
        warnings: [],
      });
    } catch (error) {
      if (!(error instanceof ModelInputError)) throw error;
      refused.push({ outcome: outcome.name, level: "between_year", year: null, reason: error.message });
    }
  }

  if (withSelection) {
    const seed = options.seed ?? 1;
    try {
      const selection = yield* asPhase(
        selectionGradientSteps(
          { year: broods.map((b) => b.year), trait: broods.map((b) => b.layDateDoy), fitness: broods.map((b) => b.recruits) },
          { bootstrapReplicates: replicates, seed },
        ),
        mismatchShare,
        1,
      );
      const method =
        `Definitions: relative fitness = recruits / that year's mean recruits (years where nobody recruited are dropped); trait = lay date standardised within the year (mean 0, SD 1); ${DATES}. ` +
        `Model: least squares of relative fitness ~ year (fixed factor, treatment contrasts) + z + z^2 over all broods of the site (Lande & Arnold 1983); beta = coefficient of z, gamma = 2 x coefficient of z^2 (Stinchcombe et al. 2008). ` +
        `SE: bootstrap SD over ${selection.bootstrapReplicates - selection.failedReplicates} of ${selection.bootstrapReplicates} replicates resampling broods with replacement within years, ` +
        `relative fitness and standardisation recomputed in each (seed ${selection.seed}); least-squares SEs are unreliable for fitness data. n = ${selection.n} broods in ${selection.yearsUsed.length} years.`;
      for (const [term, gradient, label] of [
        ["linear", selection.beta, "This estimate: beta, the linear selection gradient (per SD of lay date)."],
        ["quadratic", selection.gamma, "This estimate: gamma, the quadratic selection gradient (per SD^2 of lay date; scale per SD as stored)."],
      ] as const) {
        estimates.push({
          outcome: "selection_gradient",
          level: "within_year",
          term,
          year: null,
          estimate: gradient.estimate,
          se: gradient.standardError,
          n: selection.n,
          link: "identity",
          scale: "per_sd",
          method: withWarnings(`${method} ${label}`, selection.warnings),
          warnings: selection.warnings,
        });
      }
    } catch (error) {
      if (!(error instanceof ModelInputError)) throw error;
      refused.push({ outcome: "selection_gradient", level: "within_year", year: null, reason: error.message });
    }
  }
  return { estimates, refused, warnings: siteWarnings, broodsUsed: usable.length, yearsUsed, offsetDays, basis };
}

function subsetRows(data: MismatchModelData, rows: ArrayLike<number>, year: number): MismatchModelData {
  const subset = { broods: `${data.broods}:${year}`, year: new Int32Array(rows.length), within: new Float64Array(rows.length), response: new Float64Array(rows.length) };
  for (let k = 0; k < rows.length; k += 1) {
    subset.year[k] = data.year[rows[k]!]!;
    subset.within[k] = data.within[rows[k]!]!;
    subset.response[k] = data.response[rows[k]!]!;
  }
  return subset;
}
