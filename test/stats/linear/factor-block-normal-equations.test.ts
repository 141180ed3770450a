import { describe, expect, it } from "vitest";
import { designMatrix, type DesignMatrix } from "@/lib/stats/linear/design-matrix";
import { designTimesVector } from "@/lib/stats/linear/design-times-vector";
import { factorDesign } from "@/lib/stats/linear/treatment-contrasts";
import { solveWeightedNormalEquations, type NormalEquationsOutcome } from "@/lib/stats/linear/weighted-normal-equations";
import { createRandomStream, type RandomStream } from "@/lib/stats/random/xoshiro128";
import { expectAllClose } from "@/test/helpers/expect-close";
import { readRFixture } from "@/test/helpers/r-fixture";

/** The same matrix as a plain dense design: no declared structure, so it takes the dense Cholesky route. */
function denseCopy(design: DesignMatrix): DesignMatrix {
  return designMatrix(design.rows, design.columnNames, Float64Array.from(design.data));
}

function solved(outcome: NormalEquationsOutcome) {
  if (!outcome.ok) throw new Error(`unexpected dependent column ${outcome.column}`);
  return { coefficients: outcome.solution.coefficients, inverse: outcome.solution.inverse() };
}

/** A factor design from 0-based level codes and row-major covariate values. */
function designOf(levels: number, level: ArrayLike<number>, covariateCount: number, covariates: ArrayLike<number>): DesignMatrix {
  const columns: Record<string, number[]> = {};
  for (let j = 0; j < covariateCount; j += 1) columns[`x${j + 1}`] = Array.from({ length: level.length }, (_, i) => covariates[i * covariateCount + j]!);
  return factorDesign("level", Array.from(level), columns, Array.from({ length: levels }, (_, k) => k)).design;
}

/** Largest absolute entry, to scale an absolute tolerance for entries that are 0 to rounding. */
function scaleOf(values: ArrayLike<number>): number {
  return Math.max(...Array.from(values, Math.abs));
}

describe("factor-plus-covariates designs: normal equations through the factor block", () => {
  it("solves the worked example (by hand: common slope 1.5 / 2.5 = 0.6 from within-level deviations)", () => {
    // Level 0: (x, z) = (1, 1), (2, 2); level 1: (3, 3), (5, 4). Slope 0.6; level means of z - 0.6 x: 0.6 and 1.1.
    const design = factorDesign("group", [0, 0, 1, 1], { x: [1, 2, 3, 5] }).design;
    const { coefficients } = solved(solveWeightedNormalEquations(design, [1, 1, 1, 1], [1, 2, 3, 4]));
    expectAllClose(coefficients, [0.6, 0.5, 0.6], { rtol: 1e-14, label: "intercept, group[1], slope" });
  });

  interface Regime {
    levels: number;
    covariateCount: number;
    level: number[];
    covariates: number[];
    weights: number[];
    response: number[];
    coefficients: number[];
    inverse: number[];
  }
  // Reference: base R lm(z ~ factor(level) + x..., weights = w): coef and summary()$cov.unscaled;
  // see test/fixtures/r-stats/factor-block-normal-equations.R.
  const fixture = readRFixture<Record<string, Regime | string>>("factor-block-normal-equations.json");
  const regimes = Object.entries(fixture).filter((entry): entry is [string, Regime] => typeof entry[1] !== "string");

  it.each(regimes)("%s: coefficients and (X'WX)^-1 match R's lm to 1e-10 relative, by both routes", (_, regime) => {
    const design = designOf(regime.levels, regime.level, regime.covariateCount, regime.covariates);
    expect(design.factorStructure).toBeDefined();
    for (const [route, candidate] of [["factor block", design], ["dense Cholesky", denseCopy(design)]] as const) {
      const { coefficients, inverse } = solved(solveWeightedNormalEquations(candidate, regime.weights, regime.response));
      expectAllClose(coefficients, regime.coefficients, { rtol: 1e-10, atol: 1e-12 * scaleOf(regime.coefficients), label: `${route} coefficients` });
      expectAllClose(inverse, regime.inverse, { rtol: 1e-10, atol: 1e-12 * scaleOf(regime.inverse), label: `${route} inverse` });
    }
  });

  function normal(random: RandomStream): number {
    return Math.sqrt(-2 * Math.log(1 - random.nextFloat())) * Math.cos(2 * Math.PI * random.nextFloat());
  }

  it("agrees with the dense Cholesky route to 1e-10 on 300 random designs (1-30 levels, 0-4 covariates, uneven weights)", () => {
    const random = createRandomStream(4502);
    for (let trial = 0; trial < 300; trial += 1) {
      const levels = 1 + random.nextInt(30);
      const covariateCount = random.nextInt(5);
      const level: number[] = [];
      for (let k = 0; k < levels; k += 1) for (let r = 0, size = 1 + random.nextInt(40); r < size; r += 1) level.push(k);
      // Rows in random order: the factor block must not rely on rows grouped by level.
      for (let i = level.length - 1; i > 0; i -= 1) {
        const j = random.nextInt(i + 1);
        [level[i], level[j]] = [level[j]!, level[i]!];
      }
      const rows = level.length + covariateCount + 2;
      while (level.length < rows) level.push(random.nextInt(levels));
      const covariates = Array.from({ length: rows * covariateCount }, () => 4 * normal(random));
      // A term and its square, as in the mismatch models.
      if (covariateCount >= 2) for (let i = 0; i < rows; i += 1) covariates[i * covariateCount + 1] = covariates[i * covariateCount]! ** 2;
      const weights = Array.from({ length: rows }, () => Math.exp(2 * normal(random)));
      const response = Array.from({ length: rows }, () => 3 * normal(random));
      const design = designOf(levels, level, covariateCount, covariates);
      const structured = solved(solveWeightedNormalEquations(design, weights, response));
      const dense = solved(solveWeightedNormalEquations(denseCopy(design), weights, response));
      const label = `trial ${trial} (${levels} levels, ${covariateCount} covariates, ${rows} rows)`;
      expectAllClose(structured.coefficients, dense.coefficients, { rtol: 1e-10, atol: 1e-10 * scaleOf(dense.coefficients), label: `${label} coefficients` });
      expectAllClose(structured.inverse, dense.inverse, { rtol: 1e-10, atol: 1e-10 * scaleOf(dense.inverse), label: `${label} inverse` });
    }
  });

  it("reports the same dependent column as the dense Cholesky route", () => {
    const level = [0, 0, 1, 1, 2, 2, 2, 0, 1, 2];
    const x = [0.5, -1, 2, 0.1, -0.7, 1.3, 0.2, -2, 0.9, 1.1];
    const unit = level.map(() => 1);
    const response = x.map((v, i) => v + level[i]!);
    const cases: { what: string; design: DesignMatrix; weights: number[]; column: number }[] = [
      { what: "a level without rows (its dummy)", design: factorDesign("g", level, { x }, [0, 1, 2, 3]).design, weights: unit, column: 3 },
      { what: "zero weight on the reference level (the last dummy)", design: factorDesign("g", level, { x }, [0, 1, 2]).design, weights: level.map((g) => (g === 0 ? 0 : 1)), column: 2 },
      { what: "zero weight on a middle level (its dummy)", design: factorDesign("g", level, { x }, [0, 1, 2]).design, weights: level.map((g) => (g === 1 ? 0 : 1)), column: 1 },
      { what: "all weights zero (the intercept)", design: factorDesign("g", level, { x }, [0, 1, 2]).design, weights: level.map(() => 0), column: 0 },
      { what: "a covariate twice another", design: factorDesign("g", level, { x, twice: x.map((v) => 2 * v) }, [0, 1, 2]).design, weights: unit, column: 4 },
      { what: "a covariate equal to a level dummy", design: factorDesign("g", level, { x, dummy: level.map((g) => (g === 2 ? 1 : 0)) }, [0, 1, 2]).design, weights: unit, column: 4 },
      { what: "a covariate constant within every level", design: factorDesign("g", level, { shift: level.map((g) => 3 * g - 1) }, [0, 1, 2]).design, weights: unit, column: 3 },
    ];
    for (const { what, design, weights, column } of cases) {
      expect(solveWeightedNormalEquations(design, weights, response), what).toEqual({ ok: false, column });
      expect(solveWeightedNormalEquations(denseCopy(design), weights, response), `${what}, dense`).toEqual({ ok: false, column });
    }
  });

  it("computes X b from the structure exactly as from the dense matrix", () => {
    const design = factorDesign("g", [2, 0, 1, 1, 0, 2], { c: [0.3, -1.7, 2.2, 0.9, -0.4, 1.5], c2: [0.09, 2.89, 4.84, 0.81, 0.16, 2.25] }, [0, 1, 2]).design;
    const b = Float64Array.of(-1.25, 0.375, 2.5, 0.031, -0.0047);
    expect(Array.from(designTimesVector(design, b))).toEqual(Array.from(designTimesVector(denseCopy(design), b)));
  });
});

describe("factorDesign", () => {
  it("lays out intercept, dummies of the non-reference levels, then covariates (documented example)", () => {
    const { design, levels } = factorDesign("year", [2001, 2002, 2001], { c: [0.5, -1, -0.5] });
    expect(levels).toEqual([2001, 2002]);
    expect(design.columnNames).toEqual(["intercept", "year[2002]", "c"]);
    expect(Array.from(design.data)).toEqual([1, 0, 0.5, 1, 1, -1, 1, 0, -0.5]);
    expect(design.data).toBe(design.data);
    expect(design.factorStructure).toMatchObject({ levels: 2, covariateCount: 1 });
    expect(Array.from(design.factorStructure!.levelOfRow)).toEqual([0, 1, 0]);
  });

  it("refuses an unknown level and a covariate of the wrong length", () => {
    expect(() => factorDesign("year", [2001, 2003], { c: [1, 2] }, [2001, 2002])).toThrow(/2003 is not among the levels/);
    expect(() => factorDesign("year", [2001, 2002], { c: [1] })).toThrow(/covariate c has 1 values, factor has 2/);
  });
});
