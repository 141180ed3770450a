/** F distribution (wrappers over @stdlib). Invalid arguments give NaN. */
import fCdf from "@stdlib/stats-base-dists-f-cdf";
import fQuantile from "@stdlib/stats-base-dists-f-quantile";

export function fisherFCdf(x: number, df1: number, df2: number): number {
  return fCdf(x, df1, df2);
}

export function fisherFQuantile(p: number, df1: number, df2: number): number {
  return fQuantile(p, df1, df2);
}

/** Upper-tail probability P(F >= x). */
export function fisherFUpperP(x: number, df1: number, df2: number): number {
  if (Number.isNaN(x)) return NaN;
  return 1 - fCdf(x, df1, df2);
}
