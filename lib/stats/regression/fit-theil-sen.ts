/**
 * The Theil-Sen slope: the median of the slopes of all pairs of points with distinct x, a robust
 * alternative to the least-squares slope (breakdown point about 29%), with Sen's distribution-free
 * confidence interval from Kendall's S.
 *
 * References:
 * - Theil, H. (1950). A rank-invariant method of linear and polynomial regression analysis.
 *   Proceedings of the Koninklijke Nederlandse Akademie van Wetenschappen 53: 386-392.
 * - Sen, P. K. (1968). Estimates of the regression coefficient based on Kendall's tau. Journal of
 *   the American Statistical Association 63: 1379-1389.
 * - Hollander, M. & Wolfe, D. A. (1999). Nonparametric Statistical Methods, 2nd ed., section 9.4.
 *
 * Interval: with N pair slopes sorted, C = z_{(1+level)/2} sqrt(Var S),
 * Var S = [n(n-1)(2n+5) - sum_t t(t-1)(2t+5)] / 18 over groups of tied x, the interval runs from
 * the M1-th to the (M2+1)-th slope (1-based), M1 = round((N - C)/2), M2 = round((N + C)/2),
 * clamped to the available slopes.
 */
import { normalQuantileStd } from "../distributions/normal";
import { ModelInputError } from "../model-error";

export interface TheilSenResult {
  readonly slope: number;
  /** Median of y - slope x (Conover 1980). */
  readonly intercept: number;
  readonly lower: number;
  readonly upper: number;
  readonly confidenceLevel: number;
  readonly n: number;
  /** Number of pairs with distinct x. */
  readonly pairs: number;
}

function median(sorted: Float64Array): number {
  const middle = sorted.length >> 1;
  return sorted.length % 2 ? sorted[middle]! : (sorted[middle - 1]! + sorted[middle]!) / 2;
}

/**
 * Theil-Sen slope of y on x.
 * Input: equal-length finite arrays with at least two distinct x values.
 * Returns slope, intercept and Sen's interval at `confidenceLevel` (default 0.95).
 * Throws ModelInputError for mismatched lengths, non-finite values, or fewer than two distinct x.
 * Example: x = [1, 2, 3, 4, 5], y = [1, 2, 3, 4, 50] gives slope 1 (least squares: 9.8).
 */
export function fitTheilSen(x: ArrayLike<number>, y: ArrayLike<number>, confidenceLevel = 0.95): TheilSenResult {
  const n = x.length;
  if (y.length !== n) throw new ModelInputError(`x has ${n} values, y has ${y.length}`);
  for (let i = 0; i < n; i += 1) {
    if (!Number.isFinite(x[i]!) || !Number.isFinite(y[i]!)) throw new ModelInputError(`point ${i + 1} is (${x[i]}, ${y[i]}); values must be finite`);
  }
  if (!(confidenceLevel > 0 && confidenceLevel < 1)) throw new ModelInputError(`confidence level must lie in (0, 1), got ${confidenceLevel}`);
  const slopes: number[] = [];
  for (let i = 0; i < n; i += 1) {
    for (let j = i + 1; j < n; j += 1) if (x[j]! !== x[i]!) slopes.push((y[j]! - y[i]!) / (x[j]! - x[i]!));
  }
  if (slopes.length === 0) throw new ModelInputError("the Theil-Sen slope needs at least two distinct x values");
  const sorted = Float64Array.from(slopes).sort();
  const slope = median(sorted);
  const offsets = Float64Array.from({ length: n }, (_, i) => y[i]! - slope * x[i]!).sort();
  const tieSizes = new Map<number, number>();
  for (let i = 0; i < n; i += 1) tieSizes.set(x[i]!, (tieSizes.get(x[i]!) ?? 0) + 1);
  let tieTerm = 0;
  for (const t of tieSizes.values()) tieTerm += t * (t - 1) * (2 * t + 5);
  const varianceS = (n * (n - 1) * (2 * n + 5) - tieTerm) / 18;
  const critical = normalQuantileStd(1 - (1 - confidenceLevel) / 2) * Math.sqrt(varianceS);
  const pairs = sorted.length;
  const lowerRank = Math.max(1, Math.round((pairs - critical) / 2));
  const upperRank = Math.min(pairs, Math.round((pairs + critical) / 2) + 1);
  return Object.freeze({
    slope,
    intercept: median(offsets),
    lower: sorted[lowerRank - 1]!,
    upper: sorted[upperRank - 1]!,
    confidenceLevel,
    n,
    pairs,
  });
}
