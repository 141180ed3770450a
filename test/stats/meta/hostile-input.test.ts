/**
 * Input the engine must refuse with a reason, and awkward input it must fit without failing.
 * Expected behaviour follows from the definitions (a zero variance has no inverse-variance weight;
 * a rank-deficient design has no unique coefficients); numbers checked against closed forms are
 * derived beside each check.
 */
import { describe, expect, it } from "vitest";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { metaData, StudyInputError } from "@/lib/stats/meta/meta-data";
import { moderatorDesign } from "@/lib/stats/meta/moderator-design";
import { metaResultToJson } from "@/lib/stats/meta/result-json";
import { TAU2_METHODS } from "@/lib/stats/meta/tau2-estimator";
import { ModelInputError } from "@/lib/stats/model-error";
import { expectClose } from "@/test/helpers/expect-close";

const five = { estimates: [0.1, 0.3, -0.2, 0.5, 0.05], variances: [0.02, 0.05, 0.04, 0.03, 0.06] };

describe("refused input (ModelInputError with a reason)", () => {
  it("no studies, one study, and k <= p", () => {
    expect(() => metaData({ estimates: [], variances: [] })).toThrow(/no studies/);
    expect(() => fitMetaModel(metaData({ estimates: [0.2], variances: [0.01] }))).toThrow(/one study pools nothing/);
    const two = metaData({ estimates: [0.1, 0.4], variances: [0.01, 0.02] });
    const { design } = moderatorDesign(2, [{ kind: "numeric", name: "x", values: [1, 2] }]);
    expect(() => fitMetaModel(two, { design })).toThrow(/2 studies cannot support 2 coefficients \(intercept, x\)/);
  });

  it("non-finite estimates, and zero, negative or non-finite variances, naming the study", () => {
    const cases: [Parameters<typeof metaData>[0], RegExp][] = [
      [{ estimates: [0.1, Number.NaN, 0.2], variances: [0.1, 0.1, 0.1] }, /study 2: the estimate is NaN/],
      [{ estimates: [0.1, Number.POSITIVE_INFINITY], variances: [0.1, 0.1] }, /study 2: the estimate is Infinity/],
      [{ estimates: [0.1, 0.2], variances: [0.1, 0] }, /study 2: the sampling variance is 0; it must be positive/],
      [{ estimates: [0.1, 0.2], variances: [-0.1, 0.1] }, /study 1: the sampling variance is -0.1/],
      [{ estimates: [0.1, 0.2], variances: [0.1, Number.NaN] }, /study 2: the sampling variance is NaN/],
      [{ estimates: [0.1, 0.2], standardErrors: [0.1, 0] }, /study 2: the standard error is 0/],
      [{ estimates: [0.1, 0.2], standardErrors: [1e-60, 0.1] }, /outside \[1e-100, 1e100\]/],
      [{ estimates: [0.1, 0.2], variances: [0.1, 0.1], standardErrors: [0.3, 0.3] }, /exactly one of them/],
      [{ estimates: [0.1, 0.2] }, /exactly one of them/],
      [{ estimates: [0.1, 0.2], variances: [0.1] }, /2 estimates but 1 variances/],
      [{ estimates: [0.1, 0.2], variances: [0.1, 0.1], caseWeights: [1, 0] }, /study 2: the case weight is 0/],
    ];
    for (const [input, message] of cases) {
      expect(() => metaData(input)).toThrow(message);
      expect(() => metaData(input)).toThrow(StudyInputError);
    }
    try {
      metaData({ estimates: [0.1, 0.2, 0.3], variances: [0.1, 0.1, -1] });
    } catch (error) {
      expect(error).toBeInstanceOf(StudyInputError);
      expect((error as StudyInputError).studyIndex).toBe(2);
      expect((error as StudyInputError).field).toBe("variance");
    }
  });

  it("a rank-deficient design names the collinear terms", () => {
    const x = [1, 2, 3, 4, 5];
    expect(() =>
      moderatorDesign(5, [
        { kind: "numeric", name: "warmth", values: x },
        { kind: "numeric", name: "warmth_f", values: x.map((t) => 1.8 * t + 32) },
      ]),
    ).toThrow(/'warmth_f' is a linear combination of 'intercept' and 'warmth'/);
    expect(() => moderatorDesign(5, [{ kind: "numeric", name: "year", values: [2001, 2001, 2001, 2001, 2001] }])).toThrow(
      /'year' has the same value in every study, so it is collinear with the intercept/,
    );
    // A 0/1 numeric moderator that duplicates a level column of a categorical one.
    const habitat = ["oak", "pine", "oak", "pine", "oak"];
    expect(() =>
      moderatorDesign(5, [
        { kind: "categorical", name: "habitat", values: habitat },
        { kind: "numeric", name: "conifer", values: habitat.map((h) => (h === "pine" ? 1 : 0)) },
      ]),
    ).toThrow(/'conifer' is a linear combination of 'habitat\[pine\]';/);
  });

  it("a categorical moderator with one level, an unknown reference, repeated or reserved names", () => {
    expect(() => moderatorDesign(3, [{ kind: "categorical", name: "habitat", values: ["oak", "oak", "oak"] }])).toThrow(/single level \('oak'\)/);
    expect(() => moderatorDesign(3, [{ kind: "categorical", name: "habitat", values: ["oak", "pine", "oak"], reference: "beech" }])).toThrow(
      /reference level 'beech' of moderator 'habitat' does not occur; its levels are 'oak', 'pine'/,
    );
    expect(() => moderatorDesign(3, [{ kind: "categorical", name: "habitat", values: ["oak", "", "oak"] }])).toThrow(/study 2: moderator 'habitat' is empty/);
    const x = { kind: "numeric" as const, name: "x", values: [1, 2, 3] };
    expect(() => moderatorDesign(3, [x, x])).toThrow(/given twice/);
    expect(() => moderatorDesign(3, [{ ...x, name: "intercept" }])).toThrow(/'intercept' is the name of the intercept term/);
    expect(() => moderatorDesign(3, [{ ...x, values: [1, Number.NaN, 3] }])).toThrow(/study 2: moderator 'x' is NaN/);
    expect(() => moderatorDesign(3, [{ ...x, values: [1, 2] }])).toThrow(/has 2 values for 3 studies/);
  });

  it("bad options", () => {
    const data = metaData(five);
    expect(() => fitMetaModel(data, { method: "xx" as never })).toThrow(/unknown method 'xx'/);
    expect(() => fitMetaModel(data, { test: "t" as never })).toThrow(/unknown test 't'/);
    expect(() => fitMetaModel(data, { confidenceLevel: 1.5 })).toThrow(/confidence level must lie in \(0, 1\)/);
    expect(() => fitMetaModel(data, { maxIterations: 0 })).toThrow(/maxIterations must be a positive integer/);
    expect(() => fitMetaModel(data, { permutations: { permutations: 100, seed: 1 } })).toThrow(/needs at least one moderator/);
    const { design } = moderatorDesign(5, [{ kind: "numeric", name: "x", values: [1, 2, 3, 4, 5] }]);
    expect(() => fitMetaModel(data, { design, permutations: { permutations: 0, seed: 1 } })).toThrow(/integer in \[1, 1e6\]/);
    expect(() => fitMetaModel(data, { design, predictAt: [1] })).toThrow(/needs 2 design values/);
    expect(() => fitMetaModel(data, { design, predictAt: [1, Number.NaN] })).toThrow(/'x' is not a finite number/);
  });

  it("Knapp-Hartung on estimates that the model fits exactly (Q = 0)", () => {
    const exact = metaData({ estimates: [0.3, 0.3, 0.3], variances: [0.1, 0.2, 0.3] });
    expect(() => fitMetaModel(exact, { method: "fe", test: "hksj" })).toThrow(ModelInputError);
    expect(() => fitMetaModel(exact, { method: "fe", test: "hksj" })).toThrow(/generalised Q = 0/);
    // Two equal estimates whose residuals are pure rounding (Q about 1e-33, not exactly 0) are refused too.
    const rounding = metaData({ estimates: [0.1, 0.1], variances: [0.013, 0.029] });
    expect(() => fitMetaModel(rounding, { method: "fe", test: "hksj" })).toThrow(/generalised Q = 0/);
  });
});

describe("awkward input fitted without failing", () => {
  it("identical estimates: tau2 = 0 at the boundary, the Q-profile interval is {0}, warnings say so", () => {
    const data = metaData({ estimates: [0.25, 0.25, 0.25, 0.25], variances: [0.01, 0.04, 0.02, 0.09] });
    for (const method of TAU2_METHODS) {
      const fit = fitMetaModel(data, { method });
      // SJ's one-step estimate is tau0^2 Q(tau0^2) / (k - 1) with tau0^2 = 0 here: also 0.
      expect(fit.heterogeneity.tau2, method).toBe(0);
      expectClose(fit.coefficients[0]!.estimate, 0.25, { rtol: 1e-15, label: `${method} pooled` });
      expect(fit.fit.converged).toBe(true);
      const interval = fit.heterogeneity.interval;
      expect(interval.available && interval.upperAtZero && interval.lowerAtZero).toBe(true);
      expect(fit.warnings.some((w) => w.code === "boundary_variance_component" && /single point 0/.test(w.message))).toBe(true);
      if (method !== "fe") expect(fit.warnings.some((w) => /estimated as 0/.test(w.message))).toBe(true);
      const json = JSON.stringify(metaResultToJson(fit));
      expect(json).not.toMatch(/NaN|Infinity/);
    }
  });

  it("k = 2: pooled, but no prediction interval (t with k - 2 = 0 df), with the reason", () => {
    const data = metaData({ estimates: [0.12, 0.61], variances: [0.04, 0.09] });
    for (const test of ["z", "hksj"] as const) {
      const fit = fitMetaModel(data, { method: "reml", test });
      expect(fit.prediction.available && !fit.prediction.interval.available).toBe(true);
      expect(fit.warnings.some((w) => w.code === "interval_unavailable" && /needs at least 3 studies/.test(w.message))).toBe(true);
      expect(fit.warnings.some((w) => w.code === "few_studies")).toBe(true);
      if (test === "hksj") expect(fit.test.df).toBe(1);
    }
  });

  it("variances spread over 1e-10 to 1e6 (every method converges, every number finite)", () => {
    const k = 40;
    const variances = Array.from({ length: k }, (_, i) => 10 ** (-10 + (16 * i) / (k - 1)));
    const estimates = variances.map((v, i) => 0.2 + Math.sin(i) * 0.5 + Math.sqrt(v) * Math.cos(3 * i));
    const x = estimates.map((_, i) => i % 7);
    const data = metaData({ estimates, variances });
    const { design } = moderatorDesign(k, [{ kind: "numeric", name: "x", values: x }]);
    for (const method of TAU2_METHODS) {
      for (const withModerator of [false, true]) {
        const fit = fitMetaModel(data, { method, design: withModerator ? design : undefined });
        expect(fit.fit.converged, method).toBe(true);
        expect(() => metaResultToJson(fit)).not.toThrow();
        expect(fit.heterogeneity.interval.available).toBe(true);
      }
    }
  });

  it("huge moderator values (1e12 + 0..40) give the same slope and tau2 as the small ones", () => {
    const data = metaData(five);
    const small = [0, 10, 20, 30, 40];
    const huge = small.map((x) => 1e12 + x);
    const a = fitMetaModel(data, { design: moderatorDesign(5, [{ kind: "numeric", name: "x", values: small }]).design });
    const b = fitMetaModel(data, { design: moderatorDesign(5, [{ kind: "numeric", name: "x", values: huge }]).design });
    expectClose(b.heterogeneity.tau2, a.heterogeneity.tau2, { rtol: 1e-8, atol: 1e-14, label: "tau2" });
    expectClose(b.coefficients[1]!.estimate, a.coefficients[1]!.estimate, { rtol: 1e-6, label: "slope" });
    expectClose(b.coefficients[1]!.standardError, a.coefficients[1]!.standardError, { rtol: 1e-6, label: "slope SE" });
    // The intercept moves to x = 0, 1e12 units away: intercept_b = intercept_a - 1e12 slope.
    expectClose(b.coefficients[0]!.estimate, a.coefficients[0]!.estimate - 1e12 * a.coefficients[1]!.estimate, { rtol: 1e-6, label: "intercept" });
  });

  it("non-convergence is reported, not hidden", () => {
    const data = metaData({ estimates: [0.1, 0.9, -0.4, 0.6, 1.2, -0.8], variances: [0.02, 0.05, 0.04, 0.03, 0.06, 0.01] });
    const fit = fitMetaModel(data, { method: "reml", maxIterations: 1 });
    expect(fit.fit.converged).toBe(false);
    expect(fit.fit.iterations).toBe(1);
    expect(fit.warnings.some((w) => w.code === "non_convergence")).toBe(true);
  });

  it("a study fitted exactly (leverage 1) has no standardized residual: NaN in the result, null in JSON, and a warning", () => {
    const data = metaData({ estimates: [0.1, 0.3, -0.2, 0.5], variances: [0.02, 0.05, 0.04, 0.03] });
    const { design } = moderatorDesign(4, [{ kind: "categorical", name: "habitat", values: ["oak", "oak", "oak", "pine"] }]);
    const fit = fitMetaModel(data, { design });
    expectClose(fit.studies.leverage[3]!, 1, { rtol: 1e-12, label: "leverage of the only pine study" });
    expect(Number.isNaN(fit.studies.standardizedResiduals[3]!)).toBe(true);
    expect(fit.warnings.some((w) => /undefined for studies 4/.test(w.message))).toBe(true);
    expect(metaResultToJson(fit).studies![3]!.standardized_residual).toBeNull();
  });
});

describe("a design built elsewhere is checked too", () => {
  it("refuses a non-finite design entry and a design of the wrong height", () => {
    const data = metaData(five);
    const values = Float64Array.from([1, 0, 1, 1, 1, 2, 1, Number.POSITIVE_INFINITY, 1, 4]);
    expect(() => fitMetaModel(data, { design: { rows: 5, columns: 2, columnNames: ["intercept", "x"], data: values } })).toThrow(/study 4: design column 'x' is not a finite number/);
    expect(() => fitMetaModel(data, { design: { rows: 4, columns: 1, columnNames: ["intercept"], data: new Float64Array(4).fill(1) } })).toThrow(/4 rows for 5 studies/);
  });
});
