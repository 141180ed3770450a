/** Student's t distribution (wrappers over @stdlib). Invalid arguments give NaN. */
import tCdf from "@stdlib/stats-base-dists-t-cdf";
import tQuantile from "@stdlib/stats-base-dists-t-quantile";

export function studentTCdf(t: number, df: number): number {
  return tCdf(t, df);
}

export function studentTQuantile(p: number, df: number): number {
  return tQuantile(p, df);
}

/** Two-sided p-value 2 P(T >= |t|), from the lower tail for precision. */
export function studentTTwoSidedP(t: number, df: number): number {
  if (Number.isNaN(t)) return NaN;
  return 2 * tCdf(-Math.abs(t), df);
}
