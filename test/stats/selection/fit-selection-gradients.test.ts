import { describe, expect, it } from "vitest";
import { BOOTSTRAP_BLOCK_REPLICATES, fitSelectionGradients, selectionGradientSteps } from "@/lib/stats/selection/fit-selection-gradients";
import { ModelInputError } from "@/lib/stats/model-error";
import { expectClose } from "@/test/helpers/expect-close";
import { readRFixture } from "@/test/helpers/r-fixture";

interface SelectionFixture {
  broods: { year: number[]; lay_date: number[]; recruits: number[] };
  selection: {
    beta: number;
    gamma: number;
    beta_ols_se: number;
    gamma_ols_se: number;
    n: number;
    beta_bootstrap_se: number;
    gamma_bootstrap_se: number;
    bootstrap_replicates: number;
  };
}

describe("Lande-Arnold selection gradients against R's lm (w ~ factor(year) + z + I(z^2))", () => {
  for (const name of ["many-broods", "few-broods", "rare-recruitment", "near-separation"]) {
    const fixture = readRFixture<SelectionFixture>(`brood-glm-${name}.json`);
    const result = fitSelectionGradients(
      { year: fixture.broods.year, trait: fixture.broods.lay_date, fitness: fixture.broods.recruits },
      { bootstrapReplicates: 1000, seed: 11 },
    );
    it(`${name}: beta, gamma = 2 x quadratic coefficient, and least-squares SEs to 1e-9 relative`, () => {
      expectClose(result.beta.estimate, fixture.selection.beta, { rtol: 1e-9, label: "beta" });
      expectClose(result.gamma.estimate, fixture.selection.gamma, { rtol: 1e-9, label: "gamma" });
      expectClose(result.beta.leastSquaresStandardError, fixture.selection.beta_ols_se, { rtol: 1e-9, label: "beta OLS SE" });
      expectClose(result.gamma.leastSquaresStandardError, fixture.selection.gamma_ols_se, { rtol: 1e-9, label: "gamma OLS SE" });
      expect(result.n).toBe(fixture.selection.n);
    });
    it(`${name}: bootstrap SEs agree with R's own bootstrap (B = 2000, R's generator) within 15%`, () => {
      // Both are Monte Carlo estimates of the same SE: each has a relative error of about 1/sqrt(2B)
      // (2.2% for B = 1000, 1.6% for B = 2000), so 15% is over 4 standard errors of the difference.
      // Seeds are fixed on both sides, so this test gives the same answer on every run.
      expectClose(result.beta.standardError, fixture.selection.beta_bootstrap_se, { rtol: 0.15, label: "beta bootstrap SE" });
      expectClose(result.gamma.standardError, fixture.selection.gamma_bootstrap_se, { rtol: 0.15, label: "gamma bootstrap SE" });
      expect(result.beta.lower).toBeLessThan(result.beta.estimate + 3 * result.beta.standardError);
      expect(result.beta.upper).toBeGreaterThan(result.beta.lower);
    });
  }

  it("is reproducible for a seed and drops years where nobody recruited, with a warning", () => {
    const year = [2001, 2001, 2001, 2001, 2002, 2002, 2002, 2002, 2003, 2003, 2003, 2003];
    const trait = [100, 104, 108, 112, 101, 105, 109, 113, 99, 103, 107, 111];
    const fitness = [2, 1, 0, 1, 0, 0, 0, 0, 1, 3, 0, 0];
    const first = fitSelectionGradients({ year, trait, fitness }, { bootstrapReplicates: 200, seed: 5 });
    const second = fitSelectionGradients({ year, trait, fitness }, { bootstrapReplicates: 200, seed: 5 });
    expect(second.beta.standardError).toBe(first.beta.standardError);
    expect(first.yearsUsed).toEqual([2001, 2003]);
    expect(first.yearsDropped).toEqual([{ year: 2002, reason: "nobody recruited (mean fitness 0, relative fitness undefined)" }]);
    expect(first.warnings.map((w) => w.code)).toContain("data_dropped");
    expect(first.n).toBe(8);
  });

  it("refuses input it cannot use", () => {
    expect(() => fitSelectionGradients({ year: [], trait: [], fitness: [] })).toThrow(ModelInputError);
    expect(() => fitSelectionGradients({ year: [1, 1, 1], trait: [1, 2, 3], fitness: [0, 0, 0] })).toThrow(/no year can be used/);
    expect(() => fitSelectionGradients({ year: [1, 1, 1], trait: [1, 2, 3], fitness: [0, -1, 2] })).toThrow(/fitness must be finite and >= 0/);
    expect(() => fitSelectionGradients({ year: [1, 1, 1], trait: [1, NaN, 3], fitness: [0, 1, 2] })).toThrow(/must be finite/);
    expect(() => fitSelectionGradients({ year: [1, 1, 1, 1], trait: [5, 5, 5, 5], fitness: [0, 1, 2, 1] })).toThrow(/does not vary/);
    expect(() => fitSelectionGradients({ year: [1, 1, 1], trait: [1, 2, 3], fitness: [0, 1, 2] }, { bootstrapReplicates: 1 })).toThrow(/>= 2/);
  });
});

describe("the bootstrap of the selection gradients in blocks", () => {
  const fixture = readRFixture<SelectionFixture>("brood-glm-many-broods.json");
  const input = { year: fixture.broods.year, trait: fixture.broods.lay_date, fitness: fixture.broods.recruits };

  it(`steps after every ${BOOTSTRAP_BLOCK_REPLICATES} replicates and gives the result of the one-call fit (itself checked against R above)`, () => {
    const steps = selectionGradientSteps(input, { bootstrapReplicates: 230, seed: 11 });
    const fractions: number[] = [];
    let result;
    for (let next = steps.next(); ; next = steps.next()) {
      if (next.done) {
        result = next.value;
        break;
      }
      fractions.push(next.value.fraction);
      expect(next.value.message).toMatch(/^bootstrap of the selection gradients: \d+ of 230 replicates$/);
    }
    expect(fractions).toEqual([50 / 230, 100 / 230, 150 / 230, 200 / 230]);
    expect(result).toEqual(fitSelectionGradients(input, { bootstrapReplicates: 230, seed: 11 }));
    expectClose(result.beta.estimate, fixture.selection.beta, { rtol: 1e-9, label: "beta (R lm)" });
  });
});
