/**
 * The pooling engine at the edges of valid input: sampling variances from 1e-30 to 1e30 (and
 * spread over 16 orders of magnitude in one data set), effects up to 1e8, near-constant effects,
 * k from 2 to 1500, moderators that barely vary or are on huge scales, and multilevel models with
 * such variances. Every fit either refuses with a ModelInputError that says why, or reports only
 * finite numbers that are right by the estimators' definitions, flagging non-convergence with a
 * warning: never a silent NaN or infinity.
 *
 * Outside checks: the named regimes are compared with base R (test/fixtures/r-stats/robustness-extremes.R:
 * lm() with inverse-variance weights, the DerSimonian-Laird formula, the REML score root). The
 * generated cases check properties that hold by definition (the common-effect estimate is the
 * inverse-variance weighted mean, Hedges & Olkin 1985; any intercept-only estimate with
 * non-negative weights lies between the smallest and largest effect; tau^2 >= 0; I^2 in [0, 100]
 * (Higgins & Thompson 2002); a moderator's slope scales inversely with the moderator).
 */
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { fitMetaModel, type MetaModelOptions } from "@/lib/stats/meta/fit-meta-model";
import { metaData, type MetaData } from "@/lib/stats/meta/meta-data";
import type { MetaModelResult } from "@/lib/stats/meta/meta-result";
import { moderatorDesign } from "@/lib/stats/meta/moderator-design";
import { fitMultilevelModel } from "@/lib/stats/meta/multilevel/fit-multilevel-model";
import { TAU2_METHODS } from "@/lib/stats/meta/tau2-estimator";
import { createRandomStream } from "@/lib/stats/random/xoshiro128";
import { expectClose } from "@/test/helpers/expect-close";
import { readRFixture } from "@/test/helpers/r-fixture";
import { expectFiniteOrFlagged, fitOrRefusal } from "./finite-or-flagged";

interface PoolingRegime {
  name: string;
  y: number[];
  v: number[];
  fe_estimate: number;
  fe_se: number;
  q: number;
  dl_tau2: number;
  reml_tau2: number;
  reml_estimate: number;
  reml_se: number;
}
const reference = readRFixture<{ pooling: PoolingRegime[] }>("robustness-extremes.json");

const FAST_CHECK = { seed: 20261203, numRuns: 40 };

/** Checks that hold for every intercept-only or moderated fit that was not refused. */
function expectSound(fit: MetaModelResult, data: MetaData, label: string): void {
  expectFiniteOrFlagged(fit, fit.fit.converged, label);
  expect(fit.heterogeneity.tau2, label).toBeGreaterThanOrEqual(0);
  expect(fit.heterogeneity.i2, label).toBeGreaterThanOrEqual(0);
  expect(fit.heterogeneity.i2, label).toBeLessThanOrEqual(100);
  expect(fit.heterogeneity.h2, label).toBeGreaterThanOrEqual(1 - 1e-12);
  for (const c of fit.coefficients) {
    expect(c.standardError, `${label} ${c.term} SE`).toBeGreaterThan(0);
    expect(c.pValue, `${label} ${c.term} p`).toBeGreaterThanOrEqual(0);
    expect(c.pValue, `${label} ${c.term} p`).toBeLessThanOrEqual(1);
    expect(c.ciLower, `${label} ${c.term} CI`).toBeLessThanOrEqual(c.estimate);
    expect(c.ciUpper, `${label} ${c.term} CI`).toBeGreaterThanOrEqual(c.estimate);
  }
  const weights = Array.from(fit.studies.weightPercent).reduce((a, b) => a + b, 0);
  expectClose(weights, 100, { rtol: 1e-9, label: `${label} weights sum to 100%` });
  if (fit.p === 1) {
    const low = Math.min(...data.estimates);
    const high = Math.max(...data.estimates);
    const slack = 1e-12 * (Math.abs(low) + Math.abs(high)) + 1e-300;
    expect(fit.coefficients[0]!.estimate, `${label}: a weighted mean lies within the effects`).toBeGreaterThanOrEqual(low - slack);
    expect(fit.coefficients[0]!.estimate, `${label}: a weighted mean lies within the effects`).toBeLessThanOrEqual(high + slack);
  }
}

/** The inverse-variance weighted mean, with weights scaled by the smallest variance (so none overflows). */
function weightedMean(data: MetaData): number {
  const smallest = Math.min(...data.variances);
  let total = 0;
  let weighted = 0;
  for (let i = 0; i < data.k; i++) {
    const w = smallest / data.variances[i]!;
    total += w;
    weighted += w * data.estimates[i]!;
  }
  return weighted / total;
}

describe("named extreme regimes against base R", () => {
  for (const regime of reference.pooling) {
    it(`${regime.name} (k = ${regime.y.length}): common effect, Q, DerSimonian-Laird and REML as R computes them`, () => {
      const data = metaData({ estimates: regime.y, variances: regime.v });
      const scale = Math.max(...regime.y.map(Math.abs), Math.sqrt(Math.max(...regime.v)));
      const fe = fitMetaModel(data, { method: "fe" });
      expectSound(fe, data, `${regime.name} fe`);
      expectClose(fe.coefficients[0]!.estimate, regime.fe_estimate, { rtol: 1e-9, atol: 1e-12 * scale, label: "common-effect estimate (R lm)" });
      expectClose(fe.coefficients[0]!.standardError, regime.fe_se, { rtol: 1e-9, label: "common-effect SE (R lm)" });
      expectClose(fe.heterogeneity.q, regime.q, { rtol: 1e-8, atol: 1e-9, label: "Cochran's Q" });
      const dl = fitMetaModel(data, { method: "dl" });
      expectSound(dl, data, `${regime.name} dl`);
      expectClose(dl.heterogeneity.tau2, regime.dl_tau2, { rtol: 1e-8, atol: 1e-14 * Math.max(...regime.v), label: "DerSimonian-Laird tau2 (formula)" });
      const reml = fitMetaModel(data, { method: "reml" });
      expectSound(reml, data, `${regime.name} reml`);
      expect(reml.fit.converged, `${regime.name} REML converged`).toBe(true);
      expectClose(reml.heterogeneity.tau2, regime.reml_tau2, { rtol: 1e-6, atol: 1e-10 * Math.max(...regime.v), label: "REML tau2 (R score root)" });
      expectClose(reml.coefficients[0]!.estimate, regime.reml_estimate, { rtol: 1e-7, atol: 1e-10 * scale, label: "REML estimate (R lm)" });
      expectClose(reml.coefficients[0]!.standardError, regime.reml_se, { rtol: 1e-6, label: "REML SE (R lm)" });
    });
  }
});

/** Generated data: variances 10^(centre + spread * u), effects around a location with a chosen spread. */
const extremeStudies = fc.record({
  k: fc.oneof({ arbitrary: fc.integer({ min: 2, max: 8 }), weight: 3 }, { arbitrary: fc.integer({ min: 9, max: 80 }), weight: 3 }, { arbitrary: fc.constant(1500), weight: 1 }),
  logVarianceCentre: fc.double({ min: -30, max: 30, noNaN: true }),
  logVarianceSpread: fc.double({ min: 0, max: 16, noNaN: true }),
  location: fc.oneof(fc.constant(0), fc.double({ min: -1e8, max: 1e8, noNaN: true })),
  /** log10 of the effects' spread relative to the typical standard error; -14 makes them near-constant. */
  logRelativeSpread: fc.oneof(fc.double({ min: -3, max: 3, noNaN: true }), fc.constant(-14)),
  seed: fc.integer({ min: 0, max: 2 ** 31 - 1 }),
});
type ExtremeStudies = typeof extremeStudies extends fc.Arbitrary<infer T> ? T : never;

function generate(spec: ExtremeStudies): MetaData {
  const random = createRandomStream(spec.seed);
  const v = Array.from({ length: spec.k }, () => 10 ** Math.min(30, spec.logVarianceCentre + spec.logVarianceSpread * (random.nextFloat() - 0.5)));
  const typicalSe = 10 ** (spec.logVarianceCentre / 2);
  const spread = typicalSe * 10 ** spec.logRelativeSpread;
  const y = v.map(() => spec.location + spread * (2 * random.nextFloat() - 1));
  return metaData({ estimates: y, variances: v });
}

describe("generated extreme data: every method and test gives finite, sound output or refuses", () => {
  it("intercept-only models (7 estimators x z and Knapp-Hartung)", () => {
    const tally = { fitted: 0, refused: 0 };
    fc.assert(
      fc.property(extremeStudies, (spec) => {
        const data = generate(spec);
        for (const method of TAU2_METHODS) {
          for (const test of ["z", "hksj"] as const) {
            if (method === "fe" && test === "hksj") continue;
            const label = `${method}/${test} on ${JSON.stringify(spec)}`;
            const outcome = fitOrRefusal(() => fitMetaModel(data, { method, test }));
            tally["refused" in outcome ? "refused" : "fitted"] += 1;
            if ("refused" in outcome) {
              // The one refusal valid input earns: effects identical in floating point leave
              // Knapp-Hartung no residual spread to scale by (its SE would be 0).
              expect(outcome.refused, label).toMatch(/^Knapp-Hartung inference is undefined here: the estimates fit the model exactly/);
              continue;
            }
            expectSound(outcome.result, data, label);
            if (method === "fe") {
              const mean = weightedMean(data);
              const range = Math.max(...data.estimates) - Math.min(...data.estimates);
              expectClose(outcome.result.coefficients[0]!.estimate, mean, { rtol: 1e-10, atol: 1e-10 * range + 1e-300, label: `${label}: the inverse-variance weighted mean` });
            }
          }
        }
      }),
      FAST_CHECK,
    );
    // Valid input is fitted, not refused: the checks above ran on real fits.
    expect(tally.fitted + tally.refused).toBe(FAST_CHECK.numRuns * 13);
    expect(tally.fitted).toBeGreaterThan(0.9 * FAST_CHECK.numRuns * 13);
  });

  it("meta-regression on a moderator that barely varies or lies on a huge scale; the slope scales inversely with the moderator", () => {
    const moderated = fc.record({
      studies: extremeStudies.filter((s) => s.k >= 4),
      centre: fc.oneof(fc.constant(0), fc.double({ min: -1e6, max: 1e6, noNaN: true })),
      logScale: fc.double({ min: -9, max: 6, noNaN: true }),
    });
    const tally = { fitted: 0, refused: 0 };
    fc.assert(
      fc.property(moderated, ({ studies, centre, logScale }) => {
        const data = generate(studies);
        const random = createRandomStream(studies.seed + 1);
        const u = Array.from({ length: data.k }, () => random.nextFloat() - 0.5);
        const scale = 10 ** logScale;
        const fitWith = (multiplier: number) => {
          const design = moderatorDesign(data.k, [{ kind: "numeric", name: "x", values: u.map((z) => (centre + scale * z) * multiplier) }]).design;
          const options: MetaModelOptions = { method: "reml", design };
          return fitOrRefusal(() => fitMetaModel(data, options));
        };
        const label = JSON.stringify({ studies, centre, logScale });
        const plain = fitWith(1);
        const stretched = fitWith(1000);
        tally["result" in plain ? "fitted" : "refused"] += 1;
        for (const outcome of [plain, stretched]) if ("result" in outcome) expectSound(outcome.result, data, label);
        if ("result" in plain && "result" in stretched && plain.result.fit.converged && stretched.result.fit.converged) {
          // The same model in other units: slope / 1000, same tau2 and intercept.
          const slope = plain.result.coefficients[1]!;
          expectClose(stretched.result.coefficients[1]!.estimate * 1000, slope.estimate, { rtol: 1e-5, atol: 1e-5 * slope.standardError, label: `${label}: slope in other units` });
          expectClose(stretched.result.heterogeneity.tau2, plain.result.heterogeneity.tau2, { rtol: 1e-5, atol: 1e-8 * Math.max(...data.variances), label: `${label}: tau2 in other units` });
        }
      }),
      { ...FAST_CHECK, numRuns: 30 },
    );
    // A moderator that barely varies may be refused as collinear with the intercept; most are fitted.
    expect(tally.fitted).toBeGreaterThan(tally.refused);
  });

  it("multilevel models (sites within species) with extreme variances", () => {
    const multilevel = extremeStudies.filter((s) => s.k >= 6 && s.k <= 80);
    const tally = { fitted: 0, refused: 0 };
    fc.assert(
      fc.property(multilevel, (spec) => {
        const data = generate(spec);
        const sites = Array.from({ length: data.k }, (_, i) => `site-${Math.floor(i / 2)}`);
        const species = sites.map((s) => `species-${Number(s.slice(5)) % 3}`);
        const outcome = fitOrRefusal(() =>
          fitMultilevelModel(data, { levels: [{ name: "species", values: species }, { name: "site", values: sites }], profileIntervals: false }),
        );
        tally["refused" in outcome ? "refused" : "fitted"] += 1;
        if ("refused" in outcome) return;
        const label = JSON.stringify(spec);
        expectSound(outcome.result, data, label);
        for (const component of outcome.result.multilevel!.components) expect(component.sigma2, label).toBeGreaterThanOrEqual(0);
      }),
      { ...FAST_CHECK, numRuns: 25 },
    );
    expect(tally.fitted).toBeGreaterThan(tally.refused);
  });
});
