/**
 * Trim-and-fill (Duval & Tweedie 2000a, Biometrics 56: 455-463; 2000b, JASA 95: 89-98; the L0 and
 * R0 formulas are quoted from memory of these papers in lib/stats/meta/small-study/trim-and-fill.ts).
 * Outside checks:
 * - base R (test/fixtures/r-stats/make-sensitivity-fixtures.R, R 4.2.2): the same iteration written
 *   out independently with rank(ties.method = "average"), lm() fits and an optimize() REML, on the
 *   BCG trials and on a funnel with its six smallest estimates removed; k0, side, rounds, centre,
 *   trimmed rows, filled estimates and the adjusted fit must agree;
 * - the estimators' defining properties: a symmetric (mirrored) funnel fills nothing (the Wilcoxon
 *   sum is then exactly n(n + 1) / 4, so L0 = 0, and no run of the largest deviations lies on one
 *   side, so R0 = -1); a funnel whose k0 most extreme left estimates are missing (the model both
 *   estimators are derived under) gives k0 back: at the true centre L0 = k0 (2n - k0 + 1) / (2n - 1),
 *   which rounds to k0 while k0 (k0 - 2) < n - 1/2, and R0 = k0 when the symmetric remainder's
 *   rightmost run has length 1, its expectation under symmetry.
 */
import { describe, expect, it } from "vitest";
import { metaData } from "@/lib/stats/meta/meta-data";
import { trimAndFill, trimFillEstimate } from "@/lib/stats/meta/small-study/trim-and-fill";
import type { Tau2Method } from "@/lib/stats/meta/tau2-estimator";
import { expectAllClose, expectClose } from "@/test/helpers/expect-close";
import { asymmetric, bcg, reference } from "./sensitivity-fixture";

describe("trim-and-fill against the same algorithm written in base R", () => {
  for (const [name, data] of [["bcg", bcg], ["asymmetric", asymmetric]] as const) {
    for (const method of ["fe", "dl", "reml"] as const) {
      for (const estimator of ["l0", "r0"] as const) {
        it(`${name}, ${method}, ${estimator.toUpperCase()}`, () => {
          const expected = reference.trim_and_fill[`${name}_${method}_${estimator}`]!;
          const result = trimAndFill(data, { method, estimator });
          const rtol = method === "reml" ? 1e-7 : 1e-10;
          expect(result.side).toBe(expected.side);
          expect(result.sideChosenBy).toBe("data");
          expect(result.k0).toBe(expected.k0);
          expect(result.steps).toBe(expected.steps);
          expect(result.converged).toBe(true);
          expectClose(result.estimatorValue, expected.estimator_value, { rtol: 1e-12, label: "estimator value (R)" });
          expect(result.trimmed.map((row) => row + 1)).toEqual(expected.trimmed_rows);
          expectClose(result.centre, expected.centre, { rtol, label: "centre (R)" });
          expectAllClose(result.filled.map((f) => f.estimate), expected.filled, { rtol, label: "filled estimates (R)" });
          expectClose(result.adjusted.coefficients[0]!.estimate, expected.adjusted_estimate, { rtol, label: "adjusted estimate (R)" });
          expectClose(result.adjusted.coefficients[0]!.standardError, expected.adjusted_se, { rtol, label: "adjusted SE (R)" });
          expectClose(result.adjusted.heterogeneity.tau2, expected.adjusted_tau2, { rtol, atol: 1e-12, label: "adjusted tau2 (R)" });
          expect(result.notes[0]).toMatch(/sensitivity analysis, not a correction/);
        });
      }
    }
  }
});

/** Pairs theta +/- d_j with equal variances; `alternate` makes the pairs unequal, alternating which side is larger. */
function pairedFunnel(pairs: number, alternate: boolean): { y: number[]; v: number[] } {
  const y: number[] = [];
  const v: number[] = [];
  for (let j = 0; j < pairs; j += 1) {
    const d = 0.1 + 0.08 * j;
    const variance = 0.01 + 0.015 * j;
    // Largest pair: right member larger, then alternating downwards.
    const rightLarger = (pairs - 1 - j) % 2 === 0;
    const eta = alternate ? 0.02 : 0;
    y.push(0.2 + d * (rightLarger ? 1 + eta : 1 - eta), 0.2 - d * (rightLarger ? 1 - eta : 1 + eta));
    v.push(variance, variance);
  }
  return { y, v };
}

/** The k0 estimates beyond the pairs on the right: the mirrors of the k0 most extreme left estimates, which are missing. */
function withUnmatched(funnel: { y: number[]; v: number[] }, pairs: number, k0: number) {
  const y = [...funnel.y];
  const v = [...funnel.v];
  for (let j = 0; j < k0; j += 1) {
    y.push(0.2 + 0.1 + 0.08 * (pairs + j));
    v.push(0.01 + 0.015 * (pairs + j));
  }
  return metaData({ estimates: y, variances: v });
}

describe("trim-and-fill on funnels of known shape", () => {
  const methods: Tau2Method[] = ["fe", "dl", "reml"];
  it("a mirrored (exactly symmetric) funnel fills nothing: L0 = 0 and R0 = -1 exactly, every method", () => {
    const { y, v } = pairedFunnel(12, false);
    const data = metaData({ estimates: y, variances: v });
    for (const method of methods) {
      for (const side of ["left", "right"] as const) {
        const l0 = trimAndFill(data, { method, estimator: "l0", side });
        const r0 = trimAndFill(data, { method, estimator: "r0", side });
        expect(l0.k0, `${method} L0 ${side}`).toBe(0);
        expectClose(l0.estimatorValue, 0, { atol: 1e-12, label: `${method} L0 value` });
        expect(r0.k0, `${method} R0 ${side}`).toBe(0);
        expect(r0.estimatorValue).toBe(-1);
        expect(l0.filled).toEqual([]);
        expect(l0.adjusted).toBe(l0.original);
      }
    }
  });

  it("k0 = 1..4 most extreme left estimates missing: L0 and R0 (common-effect centre) estimate k0, filled as mirrors", () => {
    const pairs = 10;
    const symmetric = pairedFunnel(pairs, true);
    for (let k0 = 1; k0 <= 4; k0 += 1) {
      const data = withUnmatched(symmetric, pairs, k0);
      for (const estimator of ["l0", "r0"] as const) {
        const result = trimAndFill(data, { method: "fe", estimator });
        expect(result.side, `k0 = ${k0}`).toBe("left");
        expect(result.k0, `${estimator} with ${k0} missing`).toBe(k0);
        const n = data.k;
        if (estimator === "l0") expectClose(result.estimatorValue, (k0 * (2 * n - k0 + 1)) / (2 * n - 1), { atol: 0.5, label: "L0 near its value at the true centre" });
        // The trimmed estimates are the k0 unmatched ones, mirrored about the centre.
        expect([...result.trimmed].sort((a, b) => a - b)).toEqual(Array.from({ length: k0 }, (_, j) => 2 * pairs + j));
        result.filled.forEach((f) => expectClose(f.estimate, 2 * result.centre - data.estimates[f.mirrorOf]!, { rtol: 1e-14, label: "mirror" }));
        expectClose(result.centre, 0.2, { atol: 0.01, label: "centre of the trimmed funnel" });
        expect(result.adjusted.k).toBe(n + k0);
      }
      // Mirrored data: the side is read as right, and k0 is the same.
      const mirrored = metaData({ estimates: Array.from(data.estimates, (y) => 0.4 - y), variances: data.variances });
      const flipped = trimAndFill(mirrored, { method: "fe" });
      expect(flipped.side).toBe("right");
      expect(flipped.k0).toBe(k0);
    }
  });

  it("the estimator formulas on small hand-worked cases", () => {
    // Ranks 1, 2, 3 with signs -, +, +: T = 5, L0 = (20 - 12) / 5 = 1.6; the run of the top two is 2, R0 = 1.
    expect(trimFillEstimate("l0", Float64Array.of(-1, 2, 3))).toBeCloseTo(1.6, 14);
    expect(trimFillEstimate("r0", Float64Array.of(-1, 2, 3))).toBe(1);
    // Ties share their mean rank; a tied group with both signs ends the run.
    expect(trimFillEstimate("l0", Float64Array.of(-2, 2, 1))).toBeCloseTo((4 * (2.5 + 1) - 12) / 5, 14);
    expect(trimFillEstimate("r0", Float64Array.of(-2, 2, 1))).toBe(-1);
    expect(trimFillEstimate("r0", Float64Array.of(1, 2, 3, -0.5))).toBe(2);
  });
});

describe("hostile input", () => {
  it("refuses too few studies, case weights, bad options; says when the side cannot be read", () => {
    expect(() => trimAndFill(metaData({ estimates: [0.1, 0.2], variances: [0.1, 0.2] }))).toThrow(/at least 3 studies/);
    expect(() => trimAndFill(metaData({ estimates: [0.1, 0.2, 0.5], variances: [0.1, 0.2, 0.1], caseWeights: [1, 1, 2] }))).toThrow(/without case weights/);
    const equal = metaData({ estimates: [0.1, 0.2, 0.5, 0.3], variances: [0.1, 0.1, 0.1, 0.1] });
    expect(() => trimAndFill(equal)).toThrow(/cannot be read from the data .* give the side/);
    expect(trimAndFill(equal, { side: "left" }).sideChosenBy).toBe("given");
    expect(() => trimAndFill(bcg, { estimator: "q0" as "l0" })).toThrow(/estimator must be one of l0, r0/);
    expect(() => trimAndFill(bcg, { side: "up" as "left" })).toThrow(/side must be left or right/);
    expect(() => trimAndFill(bcg, { maxSteps: 0 })).toThrow(/maxSteps/);
    expect(() => trimAndFill(bcg, { labels: ["a"] })).toThrow(/13 studies but 1 labels/);
  });

  it("a round limit that stops the iteration early is reported, not hidden", () => {
    const expected = reference.trim_and_fill.asymmetric_fe_l0!;
    expect(expected.steps).toBeGreaterThan(2);
    const result = trimAndFill(asymmetric, { method: "fe", maxSteps: 2 });
    expect(result.converged).toBe(false);
    expect(result.warnings.map((w) => w.code)).toEqual(["non_convergence"]);
    expect(result.warnings[0]!.message).toMatch(/did not settle within 2 rounds/);
  });
});
