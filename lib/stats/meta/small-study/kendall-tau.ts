/**
 * Kendall's rank correlation tau-b between two samples, with the normal-approximation test
 * (variance of the score corrected for ties) and, when there are no ties and n < 50, the exact
 * permutation test.
 *
 * References:
 * - Kendall, M. G. (1970). Rank Correlation Methods, 4th ed. Griffin, ch. 3-4 (tau-b; the
 *   variance of S with ties).
 * - Kendall, M. G. (1938). A new measure of rank correlation. Biometrika 30: 81-93 (the exact
 *   distribution of S without ties).
 *
 * S = (concordant pairs) - (discordant pairs), pairs tied in either sample counting 0.
 * tau-b = S / sqrt((n0 - n1)(n0 - n2)), n0 = n(n-1)/2, n1 = sum t(t-1)/2 over tie groups of x
 * (n2 likewise for y). Var(S) = [n(n-1)(2n+5) - sum t(t-1)(2t+5) - sum u(u-1)(2u+5)] / 18
 *   + [sum t(t-1)][sum u(u-1)] / (2n(n-1)) + [sum t(t-1)(t-2)][sum u(u-1)(u-2)] / (9n(n-1)(n-2)).
 * z = S / sqrt(Var S), two-sided p = 2 P(Z >= |z|), no continuity correction.
 * Exact: without ties the number of concordant pairs C has the distribution of the number of
 * non-inversions of a random permutation (computed by the recursion over n); the two-sided p is
 * twice the smaller tail at the observed C, capped at 1. The cost is O(n^2) pairs.
 */
import { normalTwoSidedP } from "../../distributions/normal";
import { ModelInputError } from "../../model-error";

export interface KendallCorrelation {
  readonly n: number;
  /** tau-b. */
  readonly tau: number;
  /** S = concordant - discordant. */
  readonly score: number;
  readonly concordant: number;
  readonly discordant: number;
  /** Var(S) under independence, corrected for ties. */
  readonly scoreVariance: number;
  readonly z: number;
  /** Two-sided p-value of the normal approximation. */
  readonly pValue: number;
  /** Two-sided exact p-value, or null (ties, or n >= 50). */
  readonly exactPValue: number | null;
  readonly exactNote: string | null;
  readonly ties: boolean;
}

/** Largest n for which the exact distribution is computed (exclusive). */
export const EXACT_LIMIT = 50;

/** Sizes of the groups of equal values. */
function tieGroups(values: ArrayLike<number>): number[] {
  const sorted = Float64Array.from(values).sort();
  const groups: number[] = [];
  let run = 1;
  for (let i = 1; i <= sorted.length; i += 1) {
    if (i < sorted.length && sorted[i] === sorted[i - 1]) run += 1;
    else {
      if (run > 1) groups.push(run);
      run = 1;
    }
  }
  return groups;
}

/** P(C = c), c = 0 .. n(n-1)/2, for the concordant pairs of n untied pairs under independence. */
export function concordantPairsDistribution(n: number): Float64Array {
  let current = Float64Array.of(1);
  for (let m = 2; m <= n; m += 1) {
    const size = (m * (m - 1)) / 2 + 1;
    const next = new Float64Array(size);
    let window = 0;
    for (let j = 0; j < size; j += 1) {
      if (j < current.length) window += current[j]!;
      if (j - m >= 0 && j - m < current.length) window -= current[j - m]!;
      next[j] = window / m;
    }
    current = next;
  }
  return current;
}

function exactTwoSidedP(n: number, concordant: number): number {
  const probabilities = concordantPairsDistribution(n);
  const pairs = (n * (n - 1)) / 2;
  let tail = 0;
  if (concordant > pairs / 2) for (let c = concordant; c <= pairs; c += 1) tail += probabilities[c]!;
  else for (let c = 0; c <= concordant; c += 1) tail += probabilities[c]!;
  return Math.min(1, 2 * tail);
}

/**
 * Kendall's tau-b of x and y with its tests.
 * Constraints: equal lengths n >= 3, finite values, neither sample constant.
 * Returns tau-b, S, Var(S), z, the normal-approximation p and (no ties, n < 50) the exact p.
 * Throws ModelInputError for mismatched lengths, n < 3, non-finite values or a constant sample.
 * Example: kendallCorrelation([1, 2, 3, 4], [1, 3, 2, 4]) has S = 4, tau = 2/3, exact p = 0.333.
 */
export function kendallCorrelation(x: ArrayLike<number>, y: ArrayLike<number>): KendallCorrelation {
  const n = x.length;
  if (y.length !== n) throw new ModelInputError(`Kendall's tau needs samples of equal length, got ${n} and ${y.length}`);
  if (n < 3) throw new ModelInputError(`Kendall's tau needs at least 3 pairs, got ${n}`);
  for (let i = 0; i < n; i += 1) {
    if (!Number.isFinite(x[i]!) || !Number.isFinite(y[i]!)) throw new ModelInputError(`pair ${i + 1} is not a pair of finite numbers`);
  }
  let concordant = 0;
  let discordant = 0;
  for (let i = 0; i < n; i += 1) {
    const xi = x[i]!;
    const yi = y[i]!;
    for (let j = i + 1; j < n; j += 1) {
      const product = Math.sign(x[j]! - xi) * Math.sign(y[j]! - yi);
      if (product > 0) concordant += 1;
      else if (product < 0) discordant += 1;
    }
  }
  const xTies = tieGroups(x);
  const yTies = tieGroups(y);
  const sum = (groups: number[], f: (t: number) => number) => groups.reduce((total, t) => total + f(t), 0);
  const pairs = (n * (n - 1)) / 2;
  const xTiedPairs = sum(xTies, (t) => (t * (t - 1)) / 2);
  const yTiedPairs = sum(yTies, (t) => (t * (t - 1)) / 2);
  if (xTiedPairs === pairs || yTiedPairs === pairs) throw new ModelInputError("Kendall's tau is undefined when one sample has the same value throughout");
  const score = concordant - discordant;
  const tau = score / Math.sqrt((pairs - xTiedPairs) * (pairs - yTiedPairs));
  const scoreVariance =
    (n * (n - 1) * (2 * n + 5) - sum(xTies, (t) => t * (t - 1) * (2 * t + 5)) - sum(yTies, (t) => t * (t - 1) * (2 * t + 5))) / 18 +
    (sum(xTies, (t) => t * (t - 1)) * sum(yTies, (t) => t * (t - 1))) / (2 * n * (n - 1)) +
    (sum(xTies, (t) => t * (t - 1) * (t - 2)) * sum(yTies, (t) => t * (t - 1) * (t - 2))) / (9 * n * (n - 1) * (n - 2));
  const z = score / Math.sqrt(scoreVariance);
  const ties = xTies.length > 0 || yTies.length > 0;
  const exact = !ties && n < EXACT_LIMIT;
  return Object.freeze({
    n,
    tau,
    score,
    concordant,
    discordant,
    scoreVariance,
    z,
    pValue: normalTwoSidedP(z),
    exactPValue: exact ? exactTwoSidedP(n, concordant) : null,
    exactNote: exact ? null : ties ? "no exact p-value: the samples have ties" : `no exact p-value for n >= ${EXACT_LIMIT} (the normal approximation applies)`,
    ties,
  });
}
