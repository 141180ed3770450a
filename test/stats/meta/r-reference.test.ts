/**
 * Agreement with base R (test/fixtures/r-stats/make-meta-fixtures.R, R 4.2.2): every estimator,
 * with and without moderators, on ten generated regimes plus the BCG trials. R computes the
 * likelihood estimators by optimize() on the written-out (restricted) likelihood, the fixed parts by
 * lm() with weights, Paule-Mandel and the Q-profile limits by uniroot() on the generalised Q, and
 * DL, Hedges and Sidik-Jonkman from their formulas. Required agreement: 1e-6 relative; stated per
 * quantity below (most agree to 1e-8 or better).
 */
import { describe, expect, it } from "vitest";
import referenceJson from "@/test/fixtures/r-stats/meta-reference.json";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { predictAt } from "@/lib/stats/meta/prediction-interval";
import type { MetaModelResult } from "@/lib/stats/meta/meta-result";
import { TAU2_METHODS, type Tau2Method } from "@/lib/stats/meta/tau2-estimator";
import { expectAllClose, expectClose } from "@/test/helpers/expect-close";
import { REFERENCE_DATASET_NAMES, referenceDataset } from "./reference-datasets";

interface MethodReference {
  tau2: number;
  beta: number[];
  se: number[];
  se_hksj: number[];
  q_at_tau2: number;
  i2: number;
  h2: number;
  log_likelihood: number;
  moderator_chisq?: number;
  moderator_chisq_p?: number;
  moderator_f?: number;
  moderator_f_p?: number;
  prediction_mean: number;
  prediction_se: number;
  prediction_interval?: [number, number];
  prediction_interval_hksj?: [number, number];
}

interface ModelReference {
  columns: string[];
  k: number;
  p: number;
  q: number;
  q_df: number;
  q_p: number;
  typical_variance: number;
  q_profile: { tau2_lower: number; tau2_upper: number };
  predict_at: number[];
  methods: Record<Tau2Method, MethodReference>;
}

const reference = (referenceJson as unknown as { reference: Record<string, { intercept_only: ModelReference; moderated?: ModelReference }> }).reference;

/** The tolerance on tau^2: relative, with an absolute floor for estimates at the boundary 0. */
const TAU2_RTOL = 1e-7;
const COEFFICIENT_RTOL = 1e-7;

function checkFit(result: MetaModelResult, expected: ModelReference, ref: MethodReference, label: string): void {
  const h = result.heterogeneity;
  if (ref.tau2 === 0) expect(h.tau2, `${label} tau2 at the boundary (R)`).toBe(0);
  else expectClose(h.tau2, ref.tau2, { rtol: TAU2_RTOL, label: `${label} tau2 (R)` });
  expect(result.coefficients.map((c) => c.term)).toEqual(expected.columns);
  result.coefficients.forEach((c, j) => {
    const se = ref.se[j]!;
    expectClose(c.estimate, ref.beta[j]!, { rtol: COEFFICIENT_RTOL, atol: 1e-8 * se, label: `${label} ${c.term} estimate (R lm)` });
    expectClose(c.standardError, se, { rtol: COEFFICIENT_RTOL, label: `${label} ${c.term} SE (R lm)` });
  });
  expectClose(h.q, expected.q, { rtol: 1e-9, label: `${label} Q (R)` });
  expect(h.qDf).toBe(expected.q_df);
  expectClose(h.qPValue, expected.q_p, { rtol: 1e-6, atol: 1e-300, label: `${label} Q p-value (R pchisq)` });
  expectClose(h.typicalWithinStudyVariance, expected.typical_variance, { rtol: 1e-9, label: `${label} typical within-study variance (R)` });
  expectClose(h.i2, ref.i2, { rtol: 1e-6, atol: 1e-9, label: `${label} I2 (R)` });
  expectClose(h.h2, ref.h2, { rtol: 1e-6, label: `${label} H2 (R)` });
  expectClose(result.fit.logLikelihood, ref.log_likelihood, { rtol: 1e-9, label: `${label} log-likelihood (R, written out)` });
  expect(result.fit.converged, `${label} converged`).toBe(true);
  expect(h.interval.available).toBe(true);
  if (h.interval.available) {
    const { tau2_lower, tau2_upper } = expected.q_profile;
    if (tau2_lower === 0) expect(h.interval.tau2Lower).toBe(0);
    else expectClose(h.interval.tau2Lower, tau2_lower, { rtol: 1e-7, label: `${label} Q-profile lower (R uniroot)` });
    if (tau2_upper === 0) expect(h.interval.tau2Upper).toBe(0);
    else expectClose(h.interval.tau2Upper, tau2_upper, { rtol: 1e-7, label: `${label} Q-profile upper (R uniroot)` });
    expect(h.interval.lowerAtZero).toBe(tau2_lower === 0);
    expect(h.interval.upperAtZero).toBe(tau2_upper === 0);
  }
  if (ref.moderator_chisq !== undefined) {
    expect(result.moderatorTest?.distribution).toBe("chi-square");
    expectClose(result.moderatorTest!.statistic, ref.moderator_chisq, { rtol: 1e-7, label: `${label} Q_M (R)` });
    expectClose(result.moderatorTest!.pValue, ref.moderator_chisq_p!, { rtol: 1e-6, atol: 1e-300, label: `${label} Q_M p (R pchisq)` });
    expectClose(result.residualHeterogeneity!.q, expected.q, { rtol: 1e-9, label: `${label} Q_E (R)` });
  } else {
    expect(result.moderatorTest).toBeNull();
    expect(result.residualHeterogeneity).toBeNull();
  }
}

describe("pooling engine against base R (generated regimes, named in the fixture)", () => {
  for (const name of REFERENCE_DATASET_NAMES) {
    const dataset = referenceDataset(name);
    for (const part of ["intercept_only", "moderated"] as const) {
      const expected = reference[name]![part];
      if (!expected) continue;
      const design = part === "moderated" ? dataset.moderators!.design : undefined;
      describe(`${name} (${dataset.description}), ${part.replace("_", "-")}`, () => {
        for (const method of TAU2_METHODS) {
          const ref = expected.methods[method];
          it(`${method}: tau2, coefficients, SEs, Q, I2, H2, log-likelihood, Q-profile interval, moderator test`, () => {
            const result = fitMetaModel(dataset.data, { method, design });
            checkFit(result, expected, ref, `${name}/${part}/${method}`);
          });
          it(`${method}: Knapp-Hartung SEs and F test equal lm's own (sigma^2 = Q / (k - p))`, () => {
            const result = fitMetaModel(dataset.data, { method, design, test: "hksj" });
            result.coefficients.forEach((c, j) => expectClose(c.standardError, ref.se_hksj[j]!, { rtol: 1e-7, label: `${name} ${c.term} HKSJ SE (R lm)` }));
            expect(result.test.df).toBe(expected.k - expected.p);
            if (ref.moderator_f !== undefined) {
              expect(result.moderatorTest?.distribution).toBe("F");
              expectClose(result.moderatorTest!.statistic, ref.moderator_f, { rtol: 1e-7, label: `${name} F (R)` });
              expectClose(result.moderatorTest!.pValue, ref.moderator_f_p!, { rtol: 1e-6, label: `${name} F p (R pf)` });
            }
          });
          it(`${method}: mean and prediction interval at a given design row (t with k - p - 1 df)`, () => {
            const result = fitMetaModel(dataset.data, { method, design });
            const prediction = predictAt(result, expected.predict_at);
            expectClose(prediction.estimate, ref.prediction_mean, { rtol: 1e-7, atol: 1e-9, label: `${name} mean at x0 (R)` });
            expectClose(prediction.standardError, ref.prediction_se, { rtol: 1e-7, label: `${name} SE at x0 (R)` });
            if (ref.prediction_interval) {
              expect(prediction.interval.available).toBe(true);
              if (prediction.interval.available) expectAllClose([prediction.interval.lower, prediction.interval.upper], ref.prediction_interval, { rtol: 1e-7, atol: 1e-9, label: `${name} prediction interval (R qt)` });
              const hksj = predictAt(fitMetaModel(dataset.data, { method, design, test: "hksj" }), expected.predict_at);
              if (hksj.interval.available) expectAllClose([hksj.interval.lower, hksj.interval.upper], ref.prediction_interval_hksj!, { rtol: 1e-7, atol: 1e-9, label: `${name} HKSJ prediction interval (R)` });
              else expect.fail("HKSJ prediction interval missing");
            } else {
              expect(prediction.interval.available).toBe(false);
            }
          });
        }
        if (part === "moderated") {
          it("pseudo-R^2 is the truncated proportional reduction of the same estimator's tau2 (R values)", () => {
            for (const method of TAU2_METHODS) {
              const result = fitMetaModel(dataset.data, { method, design });
              const tau2Zero = reference[name]!.intercept_only.methods[method].tau2;
              if (method === "fe") expect(result.pseudoR2).toBeNull();
              else if (tau2Zero === 0) expect(result.pseudoR2?.available).toBe(false);
              else {
                expect(result.pseudoR2?.available).toBe(true);
                if (result.pseudoR2?.available) {
                  expectClose(result.pseudoR2.value, Math.max(0, (tau2Zero - expected.methods[method].tau2) / tau2Zero), { rtol: 1e-6, atol: 1e-9, label: `${name} ${method} pseudo-R2 (R)` });
                }
              }
            }
          });
        }
      });
    }
  }
});
