/**
 * A two-level model (sampling error within estimates, one random effect per estimate) is the
 * random-effects model of the pooling engine: with one level whose groups are the estimates
 * themselves, fitMultilevelModel must reproduce fitMetaModel (REML and ML), whose own values are
 * checked against base R in r-reference.test.ts (make-meta-fixtures.R) and, for the BCG trials,
 * against the published REML tau^2 0.3132 and pooled log risk ratio -0.7145 (Colditz et al. 1994
 * data; values from memory in issue 3).
 */
import { describe, expect, it } from "vitest";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { fitMultilevelModel } from "@/lib/stats/meta/multilevel/fit-multilevel-model";
import referenceJson from "@/test/fixtures/r-stats/meta-reference.json";
import { expectAllClose, expectClose } from "@/test/helpers/expect-close";
import { referenceDataset } from "./reference-datasets";

const rReference = (referenceJson as unknown as { reference: Record<string, Record<string, { methods: Record<string, { tau2: number; log_likelihood: number }> }>> }).reference;

const DATASETS = ["bcg", "small_k", "categorical", "large_k", "tau2_zero", "heavy_heterogeneity", "extreme_variances", "huge_moderator", "two_studies"];

describe("one level of one estimate per group equals the single-level random-effects model", () => {
  for (const name of DATASETS) {
    for (const method of ["reml", "ml"] as const) {
      for (const moderated of [false, true]) {
        const { data, moderators } = referenceDataset(name);
        if (moderated && moderators === null) continue;
        if (data.k - (moderated ? moderators!.design.columns : 1) < 1) continue;
        it(`${name}, ${method}${moderated ? ", with moderators" : ""}`, () => {
          const design = moderated ? moderators!.design : undefined;
          const single = fitMetaModel(data, { method, design });
          const multilevel = fitMultilevelModel(data, { method, design, levels: [{ name: "study", values: Array.from({ length: data.k }, (_, i) => `s${i}`) }] });
          const component = multilevel.multilevel!.components[0]!;
          const ref = rReference[name]![moderated ? "moderated" : "intercept_only"]!.methods[method]!;
          if (ref.tau2 === 0) {
            expect(single.heterogeneity.tau2).toBe(0);
            expect(component.sigma2, "sigma2 at the boundary (R)").toBe(0);
          } else {
            expectClose(component.sigma2, single.heterogeneity.tau2, { rtol: 1e-7, label: "sigma2 = engine tau2" });
            expectClose(component.sigma2, ref.tau2, { rtol: 1e-7, label: "sigma2 = R tau2 (make-meta-fixtures.R)" });
          }
          expectClose(multilevel.fit.logLikelihood, single.fit.logLikelihood, { rtol: 1e-10, atol: 1e-10, label: "log-likelihood = engine" });
          expectClose(multilevel.fit.logLikelihood, ref.log_likelihood, { rtol: 1e-9, atol: 1e-9, label: "log-likelihood = R" });
          single.coefficients.forEach((c, j) => {
            const m = multilevel.coefficients[j]!;
            expect(m.term).toBe(c.term);
            expectClose(m.estimate, c.estimate, { rtol: 1e-7, atol: 1e-9 * c.standardError, label: `${c.term} estimate` });
            expectClose(m.standardError, c.standardError, { rtol: 1e-7, label: `${c.term} SE` });
            expectClose(m.pValue, c.pValue, { rtol: 1e-5, atol: 1e-300, label: `${c.term} p` });
          });
          expectClose(component.i2, single.heterogeneity.i2, { rtol: 1e-6, atol: 1e-9, label: "per-level I2 = engine I2" });
          expectClose(multilevel.heterogeneity.q, single.heterogeneity.q, { rtol: 1e-12, label: "Q" });
          expectClose(multilevel.heterogeneity.typicalWithinStudyVariance, single.heterogeneity.typicalWithinStudyVariance, { rtol: 1e-12, label: "s^2" });
          expectAllClose(multilevel.studies.weightPercent, single.studies.weightPercent, { rtol: 1e-6, atol: 1e-10, label: "weights %" });
          expectAllClose(multilevel.studies.leverage, single.studies.leverage, { rtol: 1e-6, atol: 1e-10, label: "leverage" });
          expectAllClose(multilevel.studies.residuals, single.studies.residuals, { rtol: 1e-6, atol: 1e-9, label: "residuals" });
          if (single.moderatorTest) expectClose(multilevel.moderatorTest!.statistic, single.moderatorTest.statistic, { rtol: 1e-6, label: "Q_M" });
          if ("interval" in single.prediction && "interval" in multilevel.prediction && single.prediction.interval.available && multilevel.prediction.interval.available) {
            expectClose(multilevel.prediction.interval.lower, single.prediction.interval.lower, { rtol: 1e-7, label: "prediction interval lower" });
            expectClose(multilevel.prediction.interval.upper, single.prediction.interval.upper, { rtol: 1e-7, label: "prediction interval upper" });
          }
          expect(multilevel.fit.converged).toBe(true);
        });
      }
    }
  }

  it("BCG trials: the published REML values through the multilevel route", () => {
    const { data } = referenceDataset("bcg");
    const fit = fitMultilevelModel(data, { levels: [{ name: "trial", values: Array.from({ length: 13 }, (_, i) => `T${i + 1}`) }] });
    expectClose(fit.multilevel!.components[0]!.sigma2, 0.3132, { atol: 5e-5, label: "REML tau2 (published, from memory)" });
    expectClose(fit.coefficients[0]!.estimate, -0.7145, { atol: 5e-5, label: "pooled log RR (published, from memory)" });
  });
});
