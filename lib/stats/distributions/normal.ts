/**
 * Standard normal distribution. Thin, typed wrappers over @stdlib (a tested implementation,
 * not hand-written), so the rest of lib/stats speaks one vocabulary.
 * Invalid arguments give NaN here; model code checks its inputs before calling.
 */
import normalCdf from "@stdlib/stats-base-dists-normal-cdf";
import normalQuantile from "@stdlib/stats-base-dists-normal-quantile";

/** P(Z <= z) for a standard normal Z. */
export function normalCdfStd(z: number): number {
  return normalCdf(z, 0, 1);
}

/** The z with P(Z <= z) = p. */
export function normalQuantileStd(p: number): number {
  return normalQuantile(p, 0, 1);
}

/** Two-sided p-value of a z statistic: 2 P(Z >= |z|), computed on the upper tail to keep precision. */
export function normalTwoSidedP(z: number): number {
  if (Number.isNaN(z)) return NaN;
  return 2 * normalCdf(-Math.abs(z), 0, 1);
}
