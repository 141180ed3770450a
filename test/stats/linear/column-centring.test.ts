/**
 * Weighted normal equations of designs whose predictors lie far from 0 relative to their spread,
 * solved with the columns centred on the intercept (lib/stats/linear/column-centring.ts).
 *
 * Outside checks: a least-squares fit worked by hand (closed form of simple regression: slope
 * Sxz / Sxx, Var(slope) = 1 / Sxx, Var(intercept) = 1/n + mean^2 / Sxx, Cov = -mean / Sxx;
 * Draper & Smith 1998, Applied Regression Analysis, 3rd ed., ch. 1 and 3, from memory), and the
 * fact that shifting a predictor by a constant leaves the slopes unchanged and moves the intercept
 * by shift x slope.
 */
import { describe, expect, it } from "vitest";
import { designMatrix, type DesignMatrix } from "@/lib/stats/linear/design-matrix";
import { factorDesign } from "@/lib/stats/linear/treatment-contrasts";
import { solveWeightedNormalEquations, type NormalEquationsOutcome } from "@/lib/stats/linear/weighted-normal-equations";
import { createRandomStream } from "@/lib/stats/random/xoshiro128";
import { expectAllClose } from "@/test/helpers/expect-close";

function solved(outcome: NormalEquationsOutcome) {
  if (!outcome.ok) throw new Error(`unexpected dependent column ${outcome.column}`);
  return { coefficients: outcome.solution.coefficients, inverse: outcome.solution.inverse() };
}

function interceptAnd(columns: readonly (readonly number[])[], names: readonly string[]): DesignMatrix {
  const rows = columns[0]!.length;
  const width = columns.length + 1;
  const data = new Float64Array(rows * width);
  for (let i = 0; i < rows; i += 1) {
    data[i * width] = 1;
    columns.forEach((column, j) => (data[i * width + j + 1] = column[i]!));
  }
  return designMatrix(rows, ["intercept", ...names], data);
}

describe("a predictor far from 0 relative to its spread", () => {
  // x = 1e8 + d, d = -1.5, -0.5, 0.5, 1.5; z = 5 + 2 d. By hand: Sxx = 5, mean 1e8, slope 2,
  // intercept 5 - 2e8; Var(slope) = 1/5, Cov = -1e8/5, Var(intercept) = 1/4 + 1e16/5.
  // Uncentred, X'X has a pivot of 5 against a diagonal of 4e16 and was refused as singular.
  const d = [-1.5, -0.5, 0.5, 1.5];
  const x = d.map((value) => 1e8 + value);
  const z = d.map((value) => 5 + 2 * value);
  const unit = d.map(() => 1);
  const expectedCoefficients = [5 - 2e8, 2];
  const expectedInverse = [0.25 + 1e16 / 5, -1e8 / 5, -1e8 / 5, 0.2];

  it.each([
    ["dense Cholesky", interceptAnd([x], ["x"])],
    ["factor block (one level)", factorDesign("site", [1, 1, 1, 1], { x }).design],
  ])("%s route: the hand-worked least-squares fit to 1e-12", (_, design) => {
    const { coefficients, inverse } = solved(solveWeightedNormalEquations(design, unit, z));
    expectAllClose(coefficients, expectedCoefficients, { rtol: 1e-12, label: "intercept, slope (by hand)" });
    expectAllClose(inverse, expectedInverse, { rtol: 1e-12, label: "(X'X)^-1 (by hand)" });
  });

  it("factor route, dense route and the pre-shifted design agree (shift invariance, uneven weights, 3 levels)", () => {
    const random = createRandomStream(7301);
    const rows = 300;
    const level = Array.from({ length: rows }, (_, i) => i % 3);
    // 1e6 + u with |u| < 10: subtracting 1e6 is exact, so `shifted` holds the same design, reparametrised.
    const offset = Array.from({ length: rows }, () => 1e6 + 20 * (random.nextFloat() - 0.5));
    const shifted = offset.map((value) => value - 1e6);
    const other = Array.from({ length: rows }, () => random.nextFloat() - 0.5);
    const weights = Array.from({ length: rows }, () => 0.05 + random.nextFloat());
    const response = offset.map((_, i) => 0.3 * shifted[i]! - 2 * other[i]! + level[i]! + random.nextFloat());
    const structured = factorDesign("g", level, { x: offset, w: other }, [0, 1, 2]).design;
    const dense = designMatrix(rows, structured.columnNames, Float64Array.from(structured.data));
    const reference = solved(solveWeightedNormalEquations(factorDesign("g", level, { x: shifted, w: other }, [0, 1, 2]).design, weights, response));
    // The design on x = shifted + 1e6: same slopes and level differences, intercept minus 1e6 x slope.
    const expected = Array.from(reference.coefficients);
    expected[0] = reference.coefficients[0]! - 1e6 * reference.coefficients[3]!;
    for (const [route, design] of [["factor block", structured], ["dense Cholesky", dense]] as const) {
      const { coefficients } = solved(solveWeightedNormalEquations(design, weights, response));
      expectAllClose(coefficients, expected, { rtol: 1e-10, atol: 1e-10, label: `${route} coefficients` });
    }
  });
});

describe("exact dependence is still refused, with the dependent column", () => {
  const d = [-1.5, -0.5, 0.5, 1.5, 0.25];
  const unit = d.map(() => 1);
  const cases: { what: string; design: DesignMatrix; column: number }[] = [
    { what: "twice a near-constant column", design: interceptAnd([d.map((v) => 1e6 + 1e-3 * v), d.map((v) => 2 * (1e6 + 1e-3 * v))], ["x", "twice_x"]), column: 2 },
    { what: "a constant column whose mean is not exact in binary (0.1)", design: interceptAnd([d.map(() => 0.1)], ["tenth"]), column: 1 },
    { what: "a constant column before the intercept (the intercept depends on it)", design: designMatrix(5, ["three", "intercept"], Float64Array.from(d.flatMap(() => [3, 1]))), column: 1 },
    { what: "a constant covariate of a factor design (with the intercept)", design: factorDesign("g", [0, 0, 1, 1, 1], { x: d, constant: d.map(() => 1e6 + 0.1) }, [0, 1]).design, column: 3 },
  ];
  it.each(cases)("$what", ({ design, column }) => {
    expect(solveWeightedNormalEquations(design, unit, d)).toEqual({ ok: false, column });
  });
});
