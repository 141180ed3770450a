/**
 * The permutation test of the moderators run in blocks, so a long test can report its progress,
 * be stopped, and leave the server free between blocks. Each block is an ordinary permutation
 * test of the engine (fitMetaModel with permutations: Higgins & Thompson 2004) on its own seed;
 * the counts of permuted statistics at least as large as the observed ones are added up over the
 * blocks and p = (1 + #{T* >= T}) / (N + 1) over all N permutations (Phipson & Smyth 2010).
 *
 * References:
 * - Higgins, J. P. T. & Thompson, S. G. (2004). Controlling the risk of spurious findings from
 *   meta-regression. Statistics in Medicine 23: 1663-1682.
 * - Phipson, B. & Smyth, G. K. (2010). Permutation p-values should never be zero. Statistical
 *   Applications in Genetics and Molecular Biology 9: 39.
 *
 * Blocks: the block size depends on k only (fewer permutations per block for more studies), and
 * block b uses seed + b, so the result depends on the data, N and the seed alone, never on timing.
 * With N at most one block the result is exactly the engine's single test with the seed. When
 * k! <= N the engine enumerates every ordering (exact), which is one block whatever N is.
 */
import { ModelInputError } from "../stats/model-error";
import { warning } from "../stats/warnings";
import { fitMetaModel, freeze, type MetaModelOptions } from "../stats/meta/fit-meta-model";
import type { MetaData } from "../stats/meta/meta-data";
import type { MetaModelResult, PermutationTest } from "../stats/meta/meta-result";
import type { PermutationSettings } from "../stats/meta/permutation-test";

/** Told after each block: the fraction of permutations done. May throw to stop the test. */
export type BlockProgress = (fraction: number, message: string) => Promise<void>;

/** Permutations per block for k studies: about 20,000 study-fits per block, 10 to 1,000 permutations. */
export function permutationBlockSize(k: number): number {
  return Math.max(10, Math.min(1000, Math.floor(20_000 / k)));
}

function enumerable(k: number, limit: number): boolean {
  let product = 1;
  for (let i = 2; i <= k; i += 1) {
    product *= i;
    if (product > limit) return false;
  }
  return true;
}

/** The number of permuted statistics >= the observed one behind a random-permutation p-value. */
function exceedances(pValue: number, permutations: number): number {
  return Math.round(pValue * (permutations + 1)) - 1;
}

const yieldToOthers = () => new Promise<void>((resolve) => setImmediate(resolve));

/**
 * Fits the model (options without `permutations`) with a permutation test of N permutations.
 * Input: a moderated model, N an integer in [1, 1e6], a safe-integer seed.
 * Returns the fit with its permutationTest over all N permutations (exact when k! <= N).
 * Throws ModelInputError as fitMetaModel (no moderators, bad N or seed), or whatever `progress` throws.
 * Example: 5,000 permutations of 25 studies run as 7 blocks of 800 (the last of 200).
 */
export async function fitWithPermutationBlocks(data: MetaData, options: Omit<MetaModelOptions, "permutations">, settings: PermutationSettings, progress: BlockProgress): Promise<MetaModelResult> {
  const { permutations, seed } = settings;
  if (!Number.isInteger(permutations) || permutations < 1 || permutations > 1e6) throw new ModelInputError(`the number of permutations must be an integer in [1, 1e6], got ${permutations}`);
  if (!Number.isSafeInteger(seed)) throw new ModelInputError(`the permutation seed must be a safe integer, got ${seed}`);
  const blockSize = permutationBlockSize(data.k);
  if (permutations <= blockSize || enumerable(data.k, permutations)) {
    const fit = fitMetaModel(data, { ...options, permutations: settings });
    await progress(1, `${fit.permutationTest!.permutations} permutations done`);
    return fit;
  }
  const base = fitMetaModel(data, options);
  if (base.p < 2) throw new ModelInputError("a permutation test of the moderators needs at least one moderator");
  const exceed = new Array<number>(base.p).fill(0);
  let exceedOmnibus = 0;
  let nonConverged = 0;
  let done = 0;
  let block = 0;
  let coefficientIsTested: boolean[] = [];
  while (done < permutations) {
    const size = Math.min(blockSize, permutations - done);
    const test = fitMetaModel(data, { ...options, permutations: { permutations: size, seed: seed + block } }).permutationTest!;
    coefficientIsTested = test.coefficientPValues.map((p) => p !== null);
    test.coefficientPValues.forEach((p, j) => {
      if (p !== null) exceed[j] += exceedances(p, size);
    });
    exceedOmnibus += exceedances(test.moderatorTestPValue, size);
    nonConverged += test.nonConvergedFits;
    done += size;
    block += 1;
    await progress(done / permutations, `${done} of ${permutations} permutations`);
    await yieldToOthers();
  }
  const pValue = (count: number) => (count + 1) / (permutations + 1);
  const permutationTest: PermutationTest = {
    permutations,
    exact: false,
    seed,
    coefficientPValues: coefficientIsTested.map((tested, j) => (tested ? pValue(exceed[j]!) : null)),
    moderatorTestPValue: pValue(exceedOmnibus),
    nonConvergedFits: nonConverged,
    description: `${permutations} random orderings of the moderator rows in ${block} blocks of up to ${blockSize} (block b seeded ${seed} + b); p = (1 + #{T* >= T}) / (N + 1).`,
  };
  const warnings = nonConverged > 0
    ? [...base.warnings, warning("non_convergence", `${nonConverged} of ${permutations} permuted fits did not converge; they are counted at their last iterate`)]
    : base.warnings;
  return freeze({ ...base, permutationTest, warnings });
}
