/** F distribution (wrappers over @stdlib). Invalid arguments give NaN. */
import fCdf from "@stdlib/stats-base-dists-f-cdf";
import fQuantile from "@stdlib/stats-base-dists-f-quantile";
import betainc from "@stdlib/math-base-special-betainc";

export function fisherFCdf(x: number, df1: number, df2: number): number {
  return fCdf(x, df1, df2);
}

export function fisherFQuantile(p: number, df1: number, df2: number): number {
  return fQuantile(p, df1, df2);
}

/**
 * Upper-tail probability P(F >= x) = I_{df2 / (df2 + df1 x)}(df2/2, df1/2) (regularised incomplete
 * beta), so that small p-values keep their digits (1 - cdf would round them to 0 below about 1e-16).
 */
export function fisherFUpperP(x: number, df1: number, df2: number): number {
  if (Number.isNaN(x) || !(df1 > 0) || !(df2 > 0)) return NaN;
  if (x <= 0) return 1;
  return betainc(df2 / (df2 + df1 * x), df2 / 2, df1 / 2);
}
