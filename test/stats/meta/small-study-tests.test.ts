/**
 * Funnel-plot data, Egger's test, the regression on the standard error, Kendall's tau and Begg and
 * Mazumdar's rank correlation test. Outside sources, named at each check:
 * - base R (test/fixtures/r-stats/make-sensitivity-fixtures.R, R 4.2.2): Egger as
 *   lm(y / se ~ I(1 / se)); the REML meta-regression on se; cor.test(method = "kendall") with
 *   exact = FALSE (normal approximation, tie-corrected, the p-value we report) and exact = TRUE;
 * - the normal quantiles of the contours (qnorm, quoted to 6 digits);
 * - the number of permutations of n items with j inversions (Mahonian numbers, OEIS A008302:
 *   n = 4 gives 1, 3, 5, 6, 5, 3, 1).
 */
import { describe, expect, it } from "vitest";
import { funnelPlotSvg } from "@/lib/plots/funnel-plot";
import { metaData } from "@/lib/stats/meta/meta-data";
import { eggerTest, standardErrorRegression } from "@/lib/stats/meta/small-study/egger-test";
import { funnelData } from "@/lib/stats/meta/small-study/funnel-data";
import { concordantPairsDistribution, kendallCorrelation } from "@/lib/stats/meta/small-study/kendall-tau";
import { rankCorrelationTest } from "@/lib/stats/meta/small-study/rank-correlation-test";
import { smallStudyAnalyses } from "@/lib/stats/meta/small-study/small-study-analyses";
import { smallStudyToJson } from "@/lib/stats/meta/small-study/small-study-json";
import { expectAllClose, expectClose } from "@/test/helpers/expect-close";
import { asymmetric, bcg, reference } from "./sensitivity-fixture";

describe("Egger's regression test", () => {
  for (const name of ["bcg", "asymmetric"] as const) {
    it(`${name}: equals R's lm(y / se ~ I(1 / se)) (estimates, SEs, t, p on k - 2 df)`, () => {
      const data = name === "bcg" ? bcg : asymmetric;
      const result = eggerTest(data);
      const expected = reference.egger[name];
      for (const part of ["intercept", "slope"] as const) {
        expectClose(result[part].estimate, expected[part].estimate, { rtol: 1e-10, label: `${part} (R lm)` });
        expectClose(result[part].standardError, expected[part].se, { rtol: 1e-10, label: `${part} SE (R lm)` });
        expectClose(result[part].statistic, expected[part].t, { rtol: 1e-10, label: `${part} t (R lm)` });
        expectClose(result[part].pValue, expected[part].p_value, { rtol: 1e-8, label: `${part} p (R lm)` });
        expect(result[part].df).toBe(expected.df);
      }
    });
  }

  it("is the common-effect meta-regression on SE with Knapp-Hartung SEs (the same weighted fit)", () => {
    const classical = eggerTest(asymmetric);
    const regression = standardErrorRegression(asymmetric, { method: "fe", test: "hksj" });
    expectClose(regression.standardErrorCoefficient.estimate, classical.intercept.estimate, { rtol: 1e-10, label: "SE coefficient = Egger intercept" });
    expectClose(regression.standardErrorCoefficient.standardError, classical.intercept.standardError, { rtol: 1e-10, label: "its SE" });
    expectClose(regression.standardErrorCoefficient.pValue, classical.intercept.pValue, { rtol: 1e-8, label: "its p" });
    expectClose(regression.fit.coefficients[0]!.estimate, classical.slope.estimate, { rtol: 1e-10, label: "intercept = Egger slope" });
  });

  it("the REML meta-regression on SE (Sterne & Egger 2005) equals R's", () => {
    for (const name of ["bcg", "asymmetric"] as const) {
      const result = standardErrorRegression(name === "bcg" ? bcg : asymmetric, { method: "reml" });
      const expected = reference.se_regression_reml[name];
      expectClose(result.fit.heterogeneity.tau2, expected.tau2, { rtol: 1e-7, label: `${name} tau2 (R)` });
      expectClose(result.fit.coefficients[0]!.estimate, expected.intercept, { rtol: 1e-7, label: `${name} intercept (R)` });
      expectClose(result.standardErrorCoefficient.estimate, expected.se_coefficient.estimate, { rtol: 1e-7, label: `${name} SE coefficient (R)` });
      expectClose(result.standardErrorCoefficient.standardError, expected.se_coefficient.se, { rtol: 1e-7, label: `${name} its SE (R)` });
      expectClose(result.standardErrorCoefficient.pValue, expected.se_coefficient.p_value, { rtol: 1e-6, label: `${name} its p (R)` });
    }
  });

  it("refuses fewer than 3 studies, equal standard errors, an exact line and case weights", () => {
    expect(() => eggerTest(metaData({ estimates: [0.1, 0.2], variances: [0.01, 0.02] }))).toThrow(/at least 3 studies \(k = 2\)/);
    expect(() => eggerTest(metaData({ estimates: [0.1, 0.2, 0.4], variances: [0.02, 0.02, 0.02] }))).toThrow(/every standard error is the same/);
    // y / se = 1 + 2 / se exactly: y = se + 2.
    const se = [0.1, 0.2, 0.4, 0.5];
    expect(() => eggerTest(metaData({ estimates: se.map((s) => s + 2), standardErrors: se }))).toThrow(/lie exactly on a line/);
    expect(() => eggerTest(metaData({ estimates: [0.1, 0.2, 0.4], variances: [0.01, 0.02, 0.03], caseWeights: [1, 2, 1] }))).toThrow(/without case weights/);
  });
});

describe("Kendall's tau and Begg and Mazumdar's rank correlation test", () => {
  it("the exact distribution: Mahonian numbers for n = 4 (OEIS A008302), total probability 1 for n = 49", () => {
    expectAllClose(concordantPairsDistribution(4), [1, 3, 5, 6, 5, 3, 1].map((c) => c / 24), { rtol: 1e-14, label: "n = 4" });
    expectClose(concordantPairsDistribution(49).reduce((a, b) => a + b, 0), 1, { rtol: 1e-12, label: "sum, n = 49" });
    const small = kendallCorrelation([1, 2, 3, 4], [1, 3, 2, 4]);
    expect(small).toMatchObject({ score: 4, concordant: 5, discordant: 1 });
    expectClose(small.exactPValue!, 1 / 3, { rtol: 1e-14, label: "exact p = 2 * 4/24" });
  });

  for (const name of ["bcg", "asymmetric"] as const) {
    it(`${name}: deviates, tau, z and both p-values equal R's cor.test(t*, v, method = "kendall")`, () => {
      const result = rankCorrelationTest(name === "bcg" ? bcg : asymmetric);
      const expected = reference.rank_correlation[name];
      expectClose(result.commonEffect, expected.common_effect, { rtol: 1e-12, label: "common effect (R)" });
      expectAllClose(result.standardizedDeviates, expected.deviates, { rtol: 1e-10, label: "standardized deviates (R)" });
      expectClose(result.correlation.tau, expected.tau, { rtol: 1e-12, label: "tau (R)" });
      expectClose(result.correlation.z, expected.z, { rtol: 1e-12, label: "z, exact = FALSE (R)" });
      expectClose(result.correlation.pValue, expected.p_normal, { rtol: 1e-10, label: "p, normal approximation (R exact = FALSE)" });
      expect(result.correlation.concordant).toBe(expected.concordant);
      expectClose(result.correlation.exactPValue!, expected.p_exact, { rtol: 1e-10, label: "p, exact (R exact = TRUE)" });
    });
  }

  it("with ties: tau-b and the tie-corrected variance match R's cor.test(exact = FALSE); no exact p", () => {
    const { x, y, tau, z, p_normal } = reference.rank_correlation.ties;
    const result = kendallCorrelation(x, y);
    expectClose(result.tau, tau, { rtol: 1e-12, label: "tau-b (R)" });
    expectClose(result.z, z, { rtol: 1e-12, label: "z (R)" });
    expectClose(result.pValue, p_normal, { rtol: 1e-10, label: "p (R)" });
    expect(result.ties).toBe(true);
    expect(result.exactPValue).toBeNull();
    expect(result.exactNote).toMatch(/ties/);
  });

  it("refuses constant samples, mismatched lengths, too few pairs and equal variances", () => {
    expect(() => kendallCorrelation([1, 1, 1], [1, 2, 3])).toThrow(/same value throughout/);
    expect(() => kendallCorrelation([1, 2, 3], [1, 2])).toThrow(/equal length/);
    expect(() => kendallCorrelation([1, 2], [1, 2])).toThrow(/at least 3 pairs/);
    expect(() => kendallCorrelation([1, Number.NaN, 3], [1, 2, 3])).toThrow(/pair 2/);
    expect(() => rankCorrelationTest(metaData({ estimates: [0.1, 0.3, 0.2], variances: [0.1, 0.1, 0.1] }))).toThrow(/every variance is the same/);
  });
});

describe("funnel-plot data", () => {
  it("points, pseudo 95% region and contours (qnorm: 1.644854, 1.959964, 2.575829); it feeds funnelPlotSvg directly", () => {
    const funnel = funnelData(bcg, -0.7145, { labels: Array.from({ length: 13 }, (_, i) => `T${i + 1}`) });
    expect(funnel.points).toHaveLength(13);
    expectClose(funnel.points[0]!.standardError, Math.sqrt(bcg.variances[0]!), { rtol: 1e-15, label: "SE" });
    const maxSe = Math.max(...bcg.variances.map(Math.sqrt));
    expect(funnel.maxStandardError).toBe(maxSe);
    expectAllClose(funnel.contours.map((c) => c.z), [1.644854, 1.959964, 2.575829], { atol: 1e-6, label: "contour z (R qnorm)" });
    expect(funnel.contours.map((c) => c.p)).toEqual([0.1, 0.05, 0.01]);
    expectClose(funnel.contours[1]!.upperAtMaxSe, 1.959964 * maxSe, { rtol: 1e-6, label: "p = 0.05 edge" });
    expectClose(funnel.pseudoConfidenceRegion.lowerAtMaxSe, -0.7145 - 1.959964 * maxSe, { rtol: 1e-6, label: "pseudo region" });
    const svg = funnelPlotSvg({ title: "BCG", effectLabel: "log risk ratio", ...funnel, points: [...funnel.points], filled: [...funnel.filled] });
    expect(svg.match(/class="funnel-point"/g)).toHaveLength(13);
  });

  it("refuses a non-finite centre and wrong labels", () => {
    expect(() => funnelData(bcg, Number.NaN)).toThrow(/finite pooled estimate/);
    expect(() => funnelData(bcg, 0, { labels: ["a"] })).toThrow(/13 studies but 1 labels/);
  });
});

describe("all small-study analyses together", () => {
  it("BCG: each part present, trim-and-fill's estimates in the funnel, notes say sensitivity analysis", () => {
    const result = smallStudyAnalyses(bcg);
    expect(result.egger.available && result.rankCorrelation.available && result.standardErrorRegression.available && result.trimAndFill.available).toBe(true);
    if (!result.trimAndFill.available) return;
    expect(result.funnel.filled.map((f) => f.estimate)).toEqual(result.trimAndFill.filled.map((f) => f.estimate));
    expect(result.notes.join(" ")).toMatch(/sensitivity analys/);
    expect(result.notes.join(" ")).toMatch(/not a correction/);
    const svg = funnelPlotSvg({ title: "BCG", effectLabel: "log RR", ...result.funnel, points: [...result.funnel.points], filled: [...result.funnel.filled] });
    expect(svg.match(/class="funnel-filled"/g)).toHaveLength(result.trimAndFill.k0);
    const json = smallStudyToJson(result) as { analysis: string; egger: { available: boolean; intercept: { p_value: number } }; trim_and_fill: { notes: string[] } };
    expect(json.analysis).toBe("small_study");
    expectClose(json.egger.intercept.p_value, reference.egger.bcg.intercept.p_value, { rtol: 1e-8, label: "JSON Egger p (R lm)" });
    expect(json.trim_and_fill.notes[0]).toMatch(/sensitivity analysis, not a correction/);
    expect(JSON.stringify(json)).not.toMatch(/NaN|Infinity/);
  });

  it("fewer than 10 studies: a low-power warning (Sterne et al. 2011); a test that cannot run is unavailable, the rest still run", () => {
    const data = metaData({ estimates: [0.1, 0.5, 0.3, 0.8], variances: [0.02, 0.02, 0.02, 0.02] });
    const result = smallStudyAnalyses(data);
    expect(result.warnings.map((w) => w.code)).toContain("few_studies");
    expect(result.egger.available).toBe(false);
    if (!result.egger.available) expect(result.egger.reason).toMatch(/every standard error is the same/);
    expect(result.rankCorrelation.available).toBe(false);
    expect(result.trimAndFill.available).toBe(false);
    if (!result.trimAndFill.available) expect(result.trimAndFill.reason).toMatch(/give the side/);
    const json = smallStudyToJson(result) as { egger: { available: boolean; note: string } };
    expect(json.egger.available).toBe(false);
    expect(json.egger.note).toMatch(/same/);
    expect(() => smallStudyAnalyses(metaData({ estimates: [0.1, 0.2], variances: [0.01, 0.02] }))).toThrow(/at least 3 studies/);
  });
});
