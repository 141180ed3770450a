/**
 * Permutation test of the moderators in a meta-regression: the moderator rows are permuted across
 * studies (each study keeps its estimate and variance), tau^2 is re-estimated with the same method,
 * and each statistic is compared with its permutation distribution.
 *
 * References:
 * - Higgins, J. P. T. & Thompson, S. G. (2004). Controlling the risk of spurious findings from
 *   meta-regression. Statistics in Medicine 23: 1663-1682.
 * - Phipson, B. & Smyth, G. K. (2010). Permutation p-values should never be zero. Statistical
 *   Applications in Genetics and Molecular Biology 9: 39 ((b + 1) / (N + 1)).
 * - Heap, B. R. (1963). Permutations by interchanges. The Computer Journal 6: 293-294.
 *
 * Statistics: |z| (or |t| under HKSJ) of each moderator coefficient and the omnibus Q_M (or F).
 * When k! <= N every ordering is enumerated (Heap's algorithm) and p = #{T* >= T} / k!, the observed
 * order included. Otherwise N random orderings (seeded xoshiro128**, Fisher-Yates) give
 * p = (1 + #{T* >= T}) / (N + 1). Ties within a relative 1e-10 count as ">=", so orderings that
 * reproduce the observed design up to rounding count as they should.
 */
import { createRandomStream } from "../random/xoshiro128";
import { conditionedInference, type InferenceTest } from "./meta-inference";
import type { PermutationTest } from "./meta-result";
import { estimateTau2, type Tau2Method } from "./tau2-estimator";
import type { IterationControl } from "./tau2-estimate";
import { WeightedFit, type MetaProblem } from "./weighted-fit";

export interface PermutationSettings {
  /** N: the number of random permutations, or the enumeration limit. */
  readonly permutations: number;
  readonly seed: number;
}

export interface PermutationSetup {
  readonly problem: MetaProblem;
  readonly method: Tau2Method;
  readonly test: InferenceTest;
  readonly control: IterationControl;
  readonly moderatorColumns: readonly number[];
  /** Observed |statistic| per column (NaN for the intercept) and the omnibus statistic. */
  readonly observedStatistics: Float64Array;
  readonly observedModeratorStatistic: number;
}

const TIE_TOLERANCE = 1e-10;

/** k! when it is at most `limit`, else Infinity. */
function factorialUpTo(k: number, limit: number): number {
  let product = 1;
  for (let i = 2; i <= k; i += 1) {
    product *= i;
    if (product > limit) return Number.POSITIVE_INFINITY;
  }
  return product;
}

/**
 * Runs the test. Input: a moderated problem (at least one moderator column), N >= 1, a safe
 * integer seed. Returns p-values per coefficient (null for the intercept) and for the omnibus test.
 * Example: five studies and N = 1000 enumerate all 120 orderings (exact: true).
 */
export function permutationTest(setup: PermutationSetup, settings: PermutationSettings): PermutationTest {
  const { problem, method, test, control, moderatorColumns, observedStatistics, observedModeratorStatistic } = setup;
  const { k, p } = problem;
  const permutedDesign = new Float64Array(k * p);
  const fit = new WeightedFit({ ...problem, design: permutedDesign });
  const exceed = new Float64Array(p);
  let exceedOmnibus = 0;
  let nonConvergedFits = 0;
  let evaluated = 0;
  const order = new Int32Array(k);
  for (let i = 0; i < k; i += 1) order[i] = i;

  const evaluateOrder = (): void => {
    for (let i = 0; i < k; i += 1) permutedDesign.set(problem.design.subarray(order[i]! * p, order[i]! * p + p), i * p);
    fit.invalidate();
    const estimate = estimateTau2(method, fit, control);
    if (!estimate.converged) nonConvergedFits += 1;
    fit.evaluate(estimate.tau2);
    evaluated += 1;
    if (test === "hksj" && !(fit.q > 0)) {
      // An exact fit makes the t and F statistics infinite: they exceed any observed value.
      for (const column of moderatorColumns) exceed[column] += 1;
      exceedOmnibus += 1;
      return;
    }
    const inference = conditionedInference(fit, test, moderatorColumns);
    for (const column of moderatorColumns) {
      const statistic = Math.abs(fit.coefficients[column]!) / Math.sqrt(inference.covariance[column * p + column]!);
      if (statistic >= observedStatistics[column]! * (1 - TIE_TOLERANCE)) exceed[column] += 1;
    }
    if (inference.moderatorStatistic! >= observedModeratorStatistic * (1 - TIE_TOLERANCE)) exceedOmnibus += 1;
  };

  const total = factorialUpTo(k, settings.permutations);
  const exact = Number.isFinite(total);
  if (exact) {
    // Heap's algorithm: every ordering exactly once, the identity first.
    const counters = new Int32Array(k);
    evaluateOrder();
    let i = 1;
    while (i < k) {
      if (counters[i]! < i) {
        const j = i % 2 === 0 ? 0 : counters[i]!;
        const swap = order[j]!;
        order[j] = order[i]!;
        order[i] = swap;
        evaluateOrder();
        counters[i] += 1;
        i = 1;
      } else {
        counters[i] = 0;
        i += 1;
      }
    }
  } else {
    const random = createRandomStream(settings.seed);
    for (let draw = 0; draw < settings.permutations; draw += 1) {
      for (let i = 0; i < k; i += 1) order[i] = i;
      for (let i = k - 1; i > 0; i -= 1) {
        const j = random.nextInt(i + 1);
        const swap = order[j]!;
        order[j] = order[i]!;
        order[i] = swap;
      }
      evaluateOrder();
    }
  }
  const pValue = (count: number): number => (exact ? count / evaluated : (count + 1) / (evaluated + 1));
  const moderatorSet = new Set(moderatorColumns);
  return {
    permutations: evaluated,
    exact,
    seed: exact ? null : settings.seed,
    coefficientPValues: Array.from({ length: p }, (_, column) => (moderatorSet.has(column) ? pValue(exceed[column]!) : null)),
    moderatorTestPValue: pValue(exceedOmnibus),
    nonConvergedFits,
    description: exact
      ? `All ${evaluated} orderings of the moderator rows enumerated; p = #{T* >= T} / ${evaluated}, the observed order included.`
      : `${evaluated} random orderings of the moderator rows (seed ${settings.seed}); p = (1 + #{T* >= T}) / (N + 1).`,
  };
}
