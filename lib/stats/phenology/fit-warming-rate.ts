/**
 * A site's warming rate: the trend of its site-year mean spring temperatures, in degrees C per
 * decade, by least squares (with its classical SE) and by the Theil-Sen slope as a robust check.
 *
 * References:
 * - Draper, N. R. & Smith, H. (1998). Applied Regression Analysis, 3rd ed., ch. 1 (slope and SE).
 * - Sen, P. K. (1968). Estimates of the regression coefficient based on Kendall's tau. Journal of
 *   the American Statistical Association 63: 1379-1389.
 */
import { designMatrix } from "../linear/design-matrix";
import { ModelInputError } from "../model-error";
import { fitTheilSen } from "../regression/fit-theil-sen";
import { fitWeightedLeastSquares } from "../regression/fit-weighted-least-squares";

export interface WarmingRateResult {
  /** Least-squares slope, degrees C per decade. */
  readonly slopePerDecade: number;
  readonly standardError: number;
  readonly residualDf: number;
  /** Theil-Sen slope and Sen's 95% interval, degrees C per decade. */
  readonly theilSenPerDecade: number;
  readonly theilSenLower: number;
  readonly theilSenUpper: number;
  readonly n: number;
  readonly firstYear: number;
  readonly lastYear: number;
}

/**
 * Warming rate from (year, mean spring temperature) pairs, one per site-year.
 * Input: equal-length finite arrays, at least 3 distinct years (one pair per year).
 * Returns both slopes per decade; the least-squares one carries an SE on n - 2 df.
 * Throws ModelInputError for fewer than 3 years, repeated years or non-finite values.
 * Example: fitWarmingRate([2000, 2001, 2002], [10, 10.1, 10.2]).slopePerDecade === 1 (to rounding).
 */
export function fitWarmingRate(years: ArrayLike<number>, temperatures: ArrayLike<number>): WarmingRateResult {
  const n = years.length;
  if (temperatures.length !== n) throw new ModelInputError(`years have ${n} values, temperatures have ${temperatures.length}`);
  if (n < 3) throw new ModelInputError(`a warming rate with a standard error needs at least 3 years of mean spring temperature, got ${n}`);
  if (new Set(Array.from(years)).size !== n) throw new ModelInputError("each year must appear once (one mean spring temperature per site-year)");
  for (let i = 0; i < n; i += 1) {
    if (!Number.isFinite(years[i]!) || !Number.isFinite(temperatures[i]!)) throw new ModelInputError(`year ${years[i]} has temperature ${temperatures[i]}; values must be finite`);
  }
  let meanYear = 0;
  for (let i = 0; i < n; i += 1) meanYear += years[i]! / n;
  // Centring the year keeps the intercept column well conditioned.
  const data = new Float64Array(2 * n);
  for (let i = 0; i < n; i += 1) {
    data[2 * i] = 1;
    data[2 * i + 1] = years[i]! - meanYear;
  }
  const fit = fitWeightedLeastSquares(designMatrix(n, ["intercept", "year"], data), temperatures);
  const robust = fitTheilSen(years, temperatures);
  let firstYear = Infinity;
  let lastYear = -Infinity;
  for (let i = 0; i < n; i += 1) {
    firstYear = Math.min(firstYear, years[i]!);
    lastYear = Math.max(lastYear, years[i]!);
  }
  return Object.freeze({
    slopePerDecade: 10 * fit.coefficients[1]!,
    standardError: 10 * fit.standardErrors[1]!,
    residualDf: fit.residualDf,
    theilSenPerDecade: 10 * robust.slope,
    theilSenLower: 10 * robust.lower,
    theilSenUpper: 10 * robust.upper,
    n,
    firstYear,
    lastYear,
  });
}
