/**
 * Permutation test of the moderators (Higgins & Thompson 2004). The exact p-values are checked
 * against base R enumerating all 5! orderings (test/fixtures/r-stats/make-meta-fixtures.R,
 * regime small_k); the random version against the exact one within Monte Carlo error, and for its
 * (1 + b) / (N + 1) form (Phipson & Smyth 2010).
 */
import { describe, expect, it } from "vitest";
import referenceJson from "@/test/fixtures/r-stats/meta-reference.json";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { metaData } from "@/lib/stats/meta/meta-data";
import { moderatorDesign } from "@/lib/stats/meta/moderator-design";
import { expectClose } from "@/test/helpers/expect-close";
import { referenceDataset } from "./reference-datasets";

const exact = (referenceJson as unknown as { reference: { small_k: { permutation: { dl_slope_p: number; reml_slope_p: number; orderings: number } } } }).reference.small_k.permutation;

describe("permutation test of the moderators", () => {
  const { data, moderators } = referenceDataset("small_k");

  it("enumerates all k! orderings when k! <= N and matches R's exact p-values (DL and REML)", () => {
    for (const [method, expected] of [["dl", exact.dl_slope_p], ["reml", exact.reml_slope_p]] as const) {
      const fit = fitMetaModel(data, { method, design: moderators!.design, permutations: { permutations: 1000, seed: 3 } });
      const test = fit.permutationTest!;
      expect(test.exact).toBe(true);
      expect(test.seed).toBeNull();
      expect(test.permutations).toBe(exact.orderings);
      expect(test.coefficientPValues[0]).toBeNull();
      expectClose(test.coefficientPValues[1]!, expected, { rtol: 1e-12, label: `${method} exact slope p (R enumeration)` });
      // One moderator: Q_M = z^2, so the omnibus and slope tests order the permutations alike.
      expectClose(test.moderatorTestPValue, expected, { rtol: 1e-12, label: `${method} exact omnibus p` });
    }
  });

  it("random permutations: seeded and reproducible, p = (1 + b) / (N + 1), close to the exact p", () => {
    const k = 7;
    const x = [0.2, 0.9, 1.4, 2.2, 2.9, 3.1, 4.0];
    const sample = metaData({ estimates: [0.05, 0.3, 0.12, 0.5, 0.41, 0.7, 0.62], variances: [0.04, 0.06, 0.05, 0.08, 0.03, 0.07, 0.05] });
    const { design } = moderatorDesign(k, [{ kind: "numeric", name: "x", values: x }]);
    const all = fitMetaModel(sample, { method: "dl", design, permutations: { permutations: 5040, seed: 1 } }).permutationTest!;
    expect(all.exact).toBe(true);
    const N = 4000;
    const first = fitMetaModel(sample, { method: "dl", design, permutations: { permutations: N, seed: 11 } }).permutationTest!;
    const again = fitMetaModel(sample, { method: "dl", design, permutations: { permutations: N, seed: 11 } }).permutationTest!;
    const other = fitMetaModel(sample, { method: "dl", design, permutations: { permutations: N, seed: 12 } }).permutationTest!;
    expect(first.exact).toBe(false);
    expect(first.seed).toBe(11);
    expect(again.coefficientPValues).toEqual(first.coefficientPValues);
    expect(other.coefficientPValues).not.toEqual(first.coefficientPValues);
    const p = first.coefficientPValues[1]!;
    const exceedances = p * (N + 1) - 1;
    expectClose(exceedances, Math.round(exceedances), { atol: 1e-9, label: "(1 + b) / (N + 1) form" });
    const monteCarloSe = Math.sqrt((all.coefficientPValues[1]! * (1 - all.coefficientPValues[1]!)) / N);
    expect(Math.abs(p - all.coefficientPValues[1]!)).toBeLessThan(4 * monteCarloSe);
  });
});
