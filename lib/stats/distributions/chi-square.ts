/** Chi-square distribution (wrappers over @stdlib). Invalid arguments give NaN. */
import chisqCdf from "@stdlib/stats-base-dists-chisquare-cdf";
import chisqQuantile from "@stdlib/stats-base-dists-chisquare-quantile";

export function chiSquareCdf(x: number, df: number): number {
  return chisqCdf(x, df);
}

export function chiSquareQuantile(p: number, df: number): number {
  return chisqQuantile(p, df);
}

/** Upper-tail probability P(X >= x). */
export function chiSquareUpperP(x: number, df: number): number {
  if (Number.isNaN(x)) return NaN;
  return 1 - chisqCdf(x, df);
}
