/** Chi-square distribution (wrappers over @stdlib). Invalid arguments give NaN. */
import chisqCdf from "@stdlib/stats-base-dists-chisquare-cdf";
import chisqQuantile from "@stdlib/stats-base-dists-chisquare-quantile";
import gammainc from "@stdlib/math-base-special-gammainc";

export function chiSquareCdf(x: number, df: number): number {
  return chisqCdf(x, df);
}

export function chiSquareQuantile(p: number, df: number): number {
  return chisqQuantile(p, df);
}

/**
 * Upper-tail probability P(X >= x), as the upper regularised incomplete gamma function Q(df/2, x/2)
 * so that small p-values keep their digits (1 - cdf would round them to 0 below about 1e-16).
 */
export function chiSquareUpperP(x: number, df: number): number {
  if (Number.isNaN(x) || !(df > 0)) return NaN;
  if (x <= 0) return 1;
  return gammainc(x / 2, df / 2, true, true);
}
