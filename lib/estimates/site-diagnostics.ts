/**
 * The two diagnostic views of one site's raw data behind its estimates, with the estimates'
 * own definitions (centred-mismatch.ts, brood-outcomes.ts):
 *
 * 1. Binned outcome against within-year mismatch c: the broods of the outcome in bins of c of
 *    equal width, each bin's mean outcome with its standard error, and the fitted curve
 *    mu(c) = g^{-1}(a + b1 c + b2 c^2) with b1, b2 the site's stored within-year linear and
 *    quadratic estimates (link scale) and the intercept a = g(overall mean outcome), so the curve
 *    passes through the overall mean at c = 0 (the mean of c). The stored model has a year
 *    effect per year; this curve shows its shape about the overall mean, not any one year.
 * 2. Annual mean outcome against annual mean mismatch, one point per year weighted by its
 *    broods, and the weighted least-squares line with the site's stored between-year slope b and
 *    intercept ybar_w - b xbar_w (weighted means with the same weights): the fitted line of that
 *    estimate, since a weighted least-squares line passes through the weighted means.
 *
 * References:
 * - van de Pol, M. & Wright, J. (2009). Animal Behaviour 77: 753-758.
 * - McCullagh, P. & Nelder, J. A. (1989). Generalized Linear Models, 2nd ed. (links g).
 * - Draper, N. R. & Smith, H. (1998). Applied Regression Analysis, 3rd ed., ch. 9 (weighted
 *   least squares passes through the weighted means).
 */
import { BROOD_OUTCOMES, type BroodOutcome } from "./brood-outcomes";
import { centredMismatch } from "./centred-mismatch";
import type { BroodForEstimates } from "./estimate-types";
import type { MismatchDefinition } from "./mismatch";

export type DiagnosticOutcome = BroodOutcome["name"];

export interface OutcomeBin {
  /** c range [from, to): days of within-year mismatch. */
  readonly from: number;
  readonly to: number;
  readonly broods: number;
  /** Mean c of the bin's broods. */
  readonly meanWithin: number;
  readonly meanOutcome: number;
  /** SE of the bin mean: sqrt(p (1 - p) / n) for a binary outcome, s / sqrt(n) for a count; null for one brood. */
  readonly standardError: number | null;
}

export type Unavailable = { readonly available: false; readonly reason: string };

export interface WithinYearCurve {
  readonly available: true;
  readonly linear: number;
  readonly quadratic: number;
  /** a = g(overall mean). */
  readonly intercept: number;
  readonly within: readonly number[];
  readonly fitted: readonly number[];
}

export interface AnnualMean {
  readonly year: number;
  /** Mean mismatch of the year's usable broods (all outcomes' broods). */
  readonly meanMismatch: number;
  /** Mean outcome over the outcome's broods of the year. */
  readonly meanOutcome: number;
  readonly broods: number;
}

export interface BetweenYearLine {
  readonly available: true;
  readonly slope: number;
  readonly intercept: number;
  readonly from: number;
  readonly to: number;
}

export interface SiteDiagnostics {
  readonly outcome: BroodOutcome;
  /** Broods of the outcome used (usable broods the outcome includes). */
  readonly broods: number;
  readonly overallMean: number | null;
  readonly binWidth: number | null;
  readonly bins: readonly OutcomeBin[];
  readonly curve: WithinYearCurve | Unavailable;
  readonly annual: readonly AnnualMean[];
  readonly line: BetweenYearLine | Unavailable;
  readonly yearsWithoutFoodPeak: readonly number[];
}

/** The stored estimates the curves are drawn from; null when the site has none (say why). */
export interface StoredDiagnosticEstimates {
  readonly withinYear: { readonly linear: number; readonly quadratic: number } | { readonly missing: string };
  readonly betweenYearSlope: number | { readonly missing: string };
}

const BIN_WIDTHS = [1, 2, 3, 4, 5, 7, 10, 14, 15, 20, 30, 50];
const TARGET_BINS = 15;
const CURVE_POINTS = 61;

/** The narrowest bin width (days) from a fixed list that covers `span` days in at most 15 bins. */
export function diagnosticBinWidth(span: number): number {
  return BIN_WIDTHS.find((w) => span / w <= TARGET_BINS) ?? Math.ceil(span / TARGET_BINS);
}

/**
 * Computes both diagnostics for one outcome.
 * Input: the site's broods (day-of-year dates), food peaks by year, the mismatch definition the
 * estimates used, the outcome, and the stored estimates. Returns the bins, annual means and the
 * curves (or why a curve cannot be drawn). Never throws for data.
 * Example: siteDiagnostics(broods, peaks, { basis: "lay_date", offsetDays: 30 }, "recruitment", stored).bins.
 */
export function siteDiagnostics(
  broods: readonly BroodForEstimates[],
  foodPeaks: ReadonlyMap<number, number>,
  definition: MismatchDefinition,
  outcomeName: DiagnosticOutcome,
  stored: StoredDiagnosticEstimates,
): SiteDiagnostics {
  const outcome = BROOD_OUTCOMES.find((o) => o.name === outcomeName);
  if (!outcome) throw new RangeError(`no diagnostics for outcome ${outcomeName}`);
  const prepared = centredMismatch(broods, foodPeaks, definition);
  const within: number[] = [];
  const response: number[] = [];
  const perYear = new Map<number, { count: number; sum: number }>();
  prepared.usable.forEach((brood, i) => {
    if (!outcome.includes(brood)) return;
    const y = outcome.response(brood);
    within.push(prepared.centred.within[i]!);
    response.push(y);
    const entry = perYear.get(brood.year) ?? { count: 0, sum: 0 };
    entry.count += 1;
    entry.sum += y;
    perYear.set(brood.year, entry);
  });
  const n = within.length;
  const empty = { available: false as const, reason: "no broods of this outcome have a food-peak date" };
  if (n === 0) {
    return { outcome, broods: 0, overallMean: null, binWidth: null, bins: [], curve: empty, annual: [], line: empty, yearsWithoutFoodPeak: prepared.yearsWithoutFoodPeak };
  }
  const overallMean = response.reduce((a, b) => a + b, 0) / n;
  const low = Math.min(...within);
  const high = Math.max(...within);
  const binWidth = diagnosticBinWidth(high - low);
  const start = Math.floor(low / binWidth) * binWidth;
  const binCount = Math.max(1, Math.floor((high - start) / binWidth) + 1);
  const sums = Array.from({ length: binCount }, () => ({ count: 0, within: 0, outcome: 0, squares: 0 }));
  for (let i = 0; i < n; i += 1) {
    const bin = sums[Math.min(binCount - 1, Math.floor((within[i]! - start) / binWidth))]!;
    bin.count += 1;
    bin.within += within[i]!;
    bin.outcome += response[i]!;
    bin.squares += response[i]! * response[i]!;
  }
  const binary = outcome.family.name === "binomial";
  const bins: OutcomeBin[] = [];
  sums.forEach((s, b) => {
    if (s.count === 0) return;
    const mean = s.outcome / s.count;
    const variance = binary ? mean * (1 - mean) : s.count > 1 ? Math.max(0, (s.squares - s.count * mean * mean) / (s.count - 1)) : Number.NaN;
    bins.push({
      from: start + b * binWidth,
      to: start + (b + 1) * binWidth,
      broods: s.count,
      meanWithin: s.within / s.count,
      meanOutcome: mean,
      standardError: s.count > 1 ? Math.sqrt(variance / s.count) : null,
    });
  });

  let curve: WithinYearCurve | Unavailable;
  const link = outcome.family.link;
  if ("missing" in stored.withinYear) curve = { available: false, reason: stored.withinYear.missing };
  else if (link === "logit" && !(overallMean > 0 && overallMean < 1)) curve = { available: false, reason: `the overall proportion is ${overallMean}, so it has no logit` };
  else if (link === "log" && !(overallMean > 0)) curve = { available: false, reason: "the overall mean count is 0, so it has no log" };
  else {
    const { linear, quadratic } = stored.withinYear;
    const intercept = outcome.family.linkOf(overallMean);
    const grid = Array.from({ length: CURVE_POINTS }, (_, i) => low + ((high - low) * i) / (CURVE_POINTS - 1));
    const eta = Float64Array.from(grid, (c) => intercept + linear * c + quadratic * c * c);
    const fitted = new Float64Array(CURVE_POINTS);
    outcome.family.meanOf(eta, fitted);
    curve = { available: true, linear, quadratic, intercept, within: grid, fitted: [...fitted] };
  }

  const annual: AnnualMean[] = [...perYear.entries()]
    .sort((a, b) => a[0] - b[0])
    .map(([year, entry]) => ({ year, meanMismatch: prepared.centred.groupMeans.get(year)!, meanOutcome: entry.sum / entry.count, broods: entry.count }));
  let line: BetweenYearLine | Unavailable;
  if (typeof stored.betweenYearSlope !== "number") line = { available: false, reason: stored.betweenYearSlope.missing };
  else {
    const weight = annual.reduce((sum, a) => sum + a.broods, 0);
    const xBar = annual.reduce((sum, a) => sum + a.broods * a.meanMismatch, 0) / weight;
    const yBar = annual.reduce((sum, a) => sum + a.broods * a.meanOutcome, 0) / weight;
    const xs = annual.map((a) => a.meanMismatch);
    line = { available: true, slope: stored.betweenYearSlope, intercept: yBar - stored.betweenYearSlope * xBar, from: Math.min(...xs), to: Math.max(...xs) };
  }
  return { outcome, broods: n, overallMean, binWidth, bins, curve, annual, line, yearsWithoutFoodPeak: prepared.yearsWithoutFoodPeak };
}
