/**
 * The permutation test in blocks. Reference: test/fixtures/r-stats/permutation-blocks.json, R's
 * exact permutation p-value of a common-effect meta-regression (first eight BCG trials on
 * absolute latitude, all 8! = 40320 orderings, base R solve). Random blocks must agree with it
 * within Monte Carlo error, and the exact enumeration to rounding.
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { fitWithPermutationBlocks, permutationBlockSize } from "@/lib/analyses/permutation-blocks";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { metaData } from "@/lib/stats/meta/meta-data";
import { moderatorDesign } from "@/lib/stats/meta/moderator-design";
import { ModelInputError } from "@/lib/stats/model-error";
import { expectClose } from "@/test/helpers/expect-close";

const reference = JSON.parse(readFileSync("test/fixtures/r-stats/permutation-blocks.json", "utf8")) as { y: number[]; v: number[]; ablat: number[]; orderings: number; observed_z: number; p_value: number };
const data = metaData({ estimates: reference.y, variances: reference.v });
const design = moderatorDesign(reference.y.length, [{ kind: "numeric", name: "ablat", values: reference.ablat }]).design;
const options = { method: "fe" as const, design };
const quiet = async () => undefined;

describe("permutation test in blocks", () => {
  it("has R's observed statistic (common effect, z) to 1e-9", () => {
    const fit = fitMetaModel(data, options);
    expectClose(Math.abs(fit.coefficients[1]!.statistic), reference.observed_z, { rtol: 1e-9, label: "|z| (R)" });
  });

  it("random blocks agree with R's exact p within 4 Monte Carlo SEs (N = 20,000 in blocks of 1,000)", async () => {
    const fractions: number[] = [];
    const fit = await fitWithPermutationBlocks(data, options, { permutations: 20_000, seed: 11 }, async (fraction) => void fractions.push(fraction));
    const test = fit.permutationTest!;
    expect(permutationBlockSize(8)).toBe(1000);
    expect(fractions).toHaveLength(20);
    expect(fractions.at(-1)).toBe(1);
    expect(test.permutations).toBe(20_000);
    expect(test.exact).toBe(false);
    const p = reference.p_value;
    const monteCarloSe = Math.sqrt((p * (1 - p)) / 20_000);
    expect(Math.abs(test.coefficientPValues[1]! - p)).toBeLessThan(4 * monteCarloSe);
    // One moderator: the omnibus test orders the permutations as |z| does.
    expectClose(test.moderatorTestPValue, test.coefficientPValues[1]!, { rtol: 1e-12, label: "omnibus = |z| test with one moderator" });
    expect(test.coefficientPValues[0]).toBeNull();
    expect(test.description).toContain("20 blocks of up to 1000");
  });

  it("enumerates every ordering when k! <= N and then equals R's exact p", async () => {
    const fit = await fitWithPermutationBlocks(data, options, { permutations: 50_000, seed: 1 }, quiet);
    expect(fit.permutationTest!.exact).toBe(true);
    expect(fit.permutationTest!.permutations).toBe(reference.orderings);
    expectClose(fit.permutationTest!.coefficientPValues[1]!, reference.p_value, { rtol: 1e-12, label: "exact p (R)" });
  });

  it("is the engine's single test, seed for seed, when N fits in one block", async () => {
    const blocked = await fitWithPermutationBlocks(data, options, { permutations: 700, seed: 5 }, quiet);
    const direct = fitMetaModel(data, { ...options, permutations: { permutations: 700, seed: 5 } });
    expect(blocked.permutationTest).toEqual(direct.permutationTest);
  });

  it("depends on the seed and N only: the same call gives the same p-values", async () => {
    const first = await fitWithPermutationBlocks(data, options, { permutations: 3_000, seed: 9 }, quiet);
    const second = await fitWithPermutationBlocks(data, options, { permutations: 3_000, seed: 9 }, quiet);
    expect(second.permutationTest).toEqual(first.permutationTest);
    // The rest of the fit is the plain fit's.
    expect(first.coefficients).toEqual(fitMetaModel(data, options).coefficients);
  });

  it("stops when progress throws (a cancelled job), and refuses a test without moderators or a bad N", async () => {
    let calls = 0;
    await expect(fitWithPermutationBlocks(data, options, { permutations: 5_000, seed: 1 }, async () => {
      calls += 1;
      if (calls === 2) throw new Error("cancelled");
    })).rejects.toThrow("cancelled");
    expect(calls).toBe(2);
    await expect(fitWithPermutationBlocks(data, { method: "fe" }, { permutations: 5_000, seed: 1 }, quiet)).rejects.toThrow(ModelInputError);
    await expect(fitWithPermutationBlocks(data, options, { permutations: 0, seed: 1 }, quiet)).rejects.toThrow(/integer in \[1, 1e6\]/);
    await expect(fitWithPermutationBlocks(data, options, { permutations: 5_000, seed: 0.5 }, quiet)).rejects.toThrow(/safe integer/);
  });
});
