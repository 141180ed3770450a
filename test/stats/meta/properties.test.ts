/**
 * Properties that must hold on any data (fast-check, fixed seeds): each is a mathematical fact
 * about the estimators, named beside its check.
 */
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { conditionDesign } from "@/lib/stats/meta/design-conditioning";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { profileLogLikelihood } from "@/lib/stats/meta/maximum-likelihood";
import { metaData, type MetaData } from "@/lib/stats/meta/meta-data";
import { moderatorDesign } from "@/lib/stats/meta/moderator-design";
import { TAU2_METHODS } from "@/lib/stats/meta/tau2-estimator";
import { WeightedFit } from "@/lib/stats/meta/weighted-fit";
import { interceptOnly, type DesignMatrix } from "@/lib/stats/linear/design-matrix";
import { expectAllClose, expectClose } from "@/test/helpers/expect-close";

interface Study {
  y: number;
  v: number;
  x: number;
}

const study = fc.record({
  y: fc.double({ min: -3, max: 3, noNaN: true }),
  v: fc.double({ min: 1e-3, max: 2, noNaN: true }),
  x: fc.double({ min: -2, max: 2, noNaN: true }),
});
/** Studies whose moderator varies enough not to be collinear with the intercept. */
const studies = fc.array(study, { minLength: 4, maxLength: 25 }).filter((s) => {
  const mean = s.reduce((a, b) => a + b.x, 0) / s.length;
  return Math.sqrt(s.reduce((a, b) => a + (b.x - mean) ** 2, 0) / s.length) > 0.2;
});
const FAST_CHECK = { seed: 20240611, numRuns: 60 };

function build(rows: readonly Study[]): { data: MetaData; design: DesignMatrix } {
  const data = metaData({ estimates: rows.map((r) => r.y), variances: rows.map((r) => r.v) });
  return { data, design: moderatorDesign(rows.length, [{ kind: "numeric", name: "x", values: rows.map((r) => r.x) }]).design };
}

function workspace(data: MetaData, design: DesignMatrix): WeightedFit {
  const conditioned = conditionDesign(design);
  return new WeightedFit({ k: data.k, p: design.columns, effectiveK: data.effectiveK, estimates: data.estimates, variances: data.variances, caseWeights: null, design: conditioned.data });
}

describe("REML and ML estimates are maxima of their likelihoods (Harville 1977)", () => {
  for (const kind of ["reml", "ml"] as const) {
    it(`${kind}: moving tau2 away from the estimate never raises the profile likelihood`, () => {
      fc.assert(
        fc.property(studies, fc.boolean(), (rows, moderated) => {
          const { data, design: withModerator } = build(rows);
          const design = moderated ? withModerator : interceptOnly(data.k);
          const fit = fitMetaModel(data, { method: kind, design });
          expect(fit.fit.converged).toBe(true);
          const tau2 = fit.heterogeneity.tau2;
          const profile = workspace(data, design);
          const best = profileLogLikelihood(profile, kind, tau2);
          expectClose(best, fit.fit.logLikelihood, { rtol: 1e-12, label: "reported log-likelihood" });
          const noise = 1e-11 * (1 + Math.abs(best));
          for (const delta of [1e-4, 1e-2, 0.3]) {
            const step = delta * (tau2 + 0.01);
            expect(profileLogLikelihood(profile, kind, tau2 + step)).toBeLessThanOrEqual(best + noise);
            if (tau2 - step >= 0) expect(profileLogLikelihood(profile, kind, tau2 - step)).toBeLessThanOrEqual(best + noise);
          }
        }),
        FAST_CHECK,
      );
    });
  }
});

describe("the Q-profile interval contains the Paule-Mandel estimate (Viechtbauer 2007: PM solves Q = k - p, between the quantiles)", () => {
  it("holds with and without a moderator", () => {
    fc.assert(
      fc.property(studies, fc.boolean(), (rows, moderated) => {
        const { data, design } = build(rows);
        const fit = fitMetaModel(data, { method: "pm", design: moderated ? design : undefined });
        const interval = fit.heterogeneity.interval;
        expect(interval.available).toBe(true);
        if (!interval.available) return;
        expect(interval.tau2Lower).toBeLessThanOrEqual(fit.heterogeneity.tau2 * (1 + 1e-9));
        expect(interval.tau2Upper).toBeGreaterThanOrEqual(fit.heterogeneity.tau2 * (1 - 1e-9));
      }),
      FAST_CHECK,
    );
  });
});

describe("permuting the rows changes nothing (the model is exchangeable in studies)", () => {
  it("every method, with a moderator: tau2, coefficients, SEs, Q and the tau2 interval", () => {
    fc.assert(
      fc.property(studies.chain((rows) => fc.tuple(fc.constant(rows), fc.shuffledSubarray(rows, { minLength: rows.length, maxLength: rows.length }))), ([rows, shuffled]) => {
        const original = build(rows);
        const permuted = build(shuffled);
        for (const method of TAU2_METHODS) {
          const a = fitMetaModel(original.data, { method, design: original.design });
          const b = fitMetaModel(permuted.data, { method, design: permuted.design });
          expectClose(b.heterogeneity.tau2, a.heterogeneity.tau2, { rtol: 1e-8, atol: 1e-12, label: `${method} tau2` });
          expectAllClose(b.coefficients.map((c) => c.estimate), a.coefficients.map((c) => c.estimate), { rtol: 1e-8, atol: 1e-10, label: `${method} coefficients` });
          expectAllClose(b.coefficients.map((c) => c.standardError), a.coefficients.map((c) => c.standardError), { rtol: 1e-8, label: `${method} SEs` });
          expectClose(b.heterogeneity.q, a.heterogeneity.q, { rtol: 1e-10, atol: 1e-12, label: `${method} Q` });
        }
      }),
      { ...FAST_CHECK, numRuns: 25 },
    );
  });
});

describe("case weights are frequency weights: weight 2 equals listing the study twice", () => {
  it("every method, with a moderator", () => {
    fc.assert(
      fc.property(studies, fc.array(fc.integer({ min: 1, max: 3 }), { minLength: 25, maxLength: 25 }), (rows, counts) => {
        const weights = rows.map((_, i) => counts[i]!);
        const weighted = metaData({ estimates: rows.map((r) => r.y), variances: rows.map((r) => r.v), caseWeights: weights });
        const weightedDesign = build(rows).design;
        const expanded = build(rows.flatMap((r, i) => Array.from({ length: weights[i]! }, () => r)));
        for (const method of TAU2_METHODS) {
          const a = fitMetaModel(weighted, { method, design: weightedDesign });
          const b = fitMetaModel(expanded.data, { method, design: expanded.design });
          expect(a.k).toBe(b.k);
          expectClose(a.heterogeneity.tau2, b.heterogeneity.tau2, { rtol: 1e-8, atol: 1e-12, label: `${method} tau2` });
          expectAllClose(a.coefficients.map((c) => c.standardError), b.coefficients.map((c) => c.standardError), { rtol: 1e-8, label: `${method} SEs` });
          expectClose(a.heterogeneity.i2, b.heterogeneity.i2, { rtol: 1e-8, atol: 1e-9, label: `${method} I2` });
          expectClose(a.fit.logLikelihood, b.fit.logLikelihood, { rtol: 1e-9, label: `${method} log-likelihood` });
        }
      }),
      { ...FAST_CHECK, numRuns: 20 },
    );
  });
});

describe("recoding a moderator rescales its coefficient and leaves the rest unchanged", () => {
  it("x -> 1e6 x + 1e9: slope / 1e6, same tau2, Q, and moderator test", () => {
    fc.assert(
      fc.property(studies, (rows) => {
        const { data, design } = build(rows);
        const recoded = moderatorDesign(data.k, [{ kind: "numeric", name: "x", values: rows.map((r) => 1e6 * r.x + 1e9) }]).design;
        for (const method of ["dl", "reml", "pm"] as const) {
          const a = fitMetaModel(data, { method, design });
          const b = fitMetaModel(data, { method, design: recoded });
          expectClose(b.heterogeneity.tau2, a.heterogeneity.tau2, { rtol: 1e-7, atol: 1e-12, label: "tau2" });
          expectClose(b.coefficients[1]!.estimate * 1e6, a.coefficients[1]!.estimate, { rtol: 1e-6, atol: 1e-9, label: "slope" });
          expectClose(b.moderatorTest!.statistic, a.moderatorTest!.statistic, { rtol: 1e-6, atol: 1e-9, label: "Q_M" });
        }
      }),
      { ...FAST_CHECK, numRuns: 30 },
    );
  });
});

describe("identities of Higgins & Thompson (2002) and Harbord & Higgins (2008)", () => {
  it("with the DL estimate, I2 = max(0, (Q - df) / Q) and H2 = max(1, Q / df)", () => {
    fc.assert(
      fc.property(studies, fc.boolean(), (rows, moderated) => {
        const { data, design } = build(rows);
        const fit = fitMetaModel(data, { method: "dl", design: moderated ? design : undefined });
        const { q, qDf } = fit.heterogeneity;
        expectClose(fit.heterogeneity.i2, Math.max(0, (100 * (q - qDf)) / q), { rtol: 1e-9, atol: 1e-9, label: "I2" });
        expectClose(fit.heterogeneity.h2, Math.max(1, q / qDf), { rtol: 1e-9, label: "H2" });
      }),
      FAST_CHECK,
    );
  });

  it("weights sum to 100%, leverages to p", () => {
    fc.assert(
      fc.property(studies, (rows) => {
        const { data, design } = build(rows);
        const fit = fitMetaModel(data, { design });
        expectClose(Array.from(fit.studies.weightPercent).reduce((a, b) => a + b, 0), 100, { rtol: 1e-12, label: "weights" });
        expectClose(Array.from(fit.studies.leverage).reduce((a, b) => a + b, 0), 2, { rtol: 1e-10, label: "leverage" });
      }),
      FAST_CHECK,
    );
  });
});
