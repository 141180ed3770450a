/**
 * Cluster-robust (CR2) standard errors with Satterthwaite df, checked
 * - by hand on two small worked examples (ordinary least squares as the common-effect model with
 *   unit variances, where A_j = (I - H_jj)^{-1/2} has a closed form; derivations beside the checks);
 * - against base R (test/fixtures/r-stats/make-multilevel-fixtures.R, R 4.2.2): lm() with weights
 *   1/(v + tau^2) for the coefficients and residuals of the single-level model, and the sandwich
 *   written out with dense matrices in its general form B_j = D_j (I - H)_j Phi (I - H)_j' D_j'
 *   (chol, eigen), df from the k-vectors g_j (the engine uses the p x p reduction instead);
 * - for multilevel models against the same R code with Phi = the fitted dense V.
 */
import { describe, expect, it } from "vitest";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { metaData } from "@/lib/stats/meta/meta-data";
import { moderatorDesign } from "@/lib/stats/meta/moderator-design";
import { fitMultilevelModel } from "@/lib/stats/meta/multilevel/fit-multilevel-model";
import { addClusterRobustInference } from "@/lib/stats/meta/robust/cluster-robust-inference";
import { cr2Sandwich } from "@/lib/stats/meta/robust/cr2-sandwich";
import { ModelInputError } from "@/lib/stats/model-error";
import { expectAllClose, expectClose } from "@/test/helpers/expect-close";
import { multilevelDataset, multilevelReference, R_VERSION, singleLevelCr2Reference } from "./multilevel-datasets";

describe("CR2 by hand: intercept-only least squares, y = (1, 2, 4, 7), unit variances", () => {
  // Common effect with v_i = 1 is OLS: mean 3.5, residuals e = (-2.5, -1.5, 0.5, 3.5), H = J/4, M = 1/4.
  const data = metaData({ estimates: [1, 2, 4, 7], variances: [1, 1, 1, 1] });
  const fit = fitMetaModel(data, { method: "fe" });

  it("two clusters {1, 2}, {3, 4}: SE 2 on 1 df (CR0 would give sqrt 2)", () => {
    // I - H_jj = [[3/4, -1/4], [-1/4, 3/4]]: eigenvalue 1/2 on (1, 1), 1 on (1, -1), so
    // A_j = sqrt(2) J/2 + (I - J/2). 1'A_j e_j = sqrt(2) * (sum of e_j) = -4 sqrt(2) and 4 sqrt(2);
    // V = M^2 (32 + 32) = 4. df: u_j = A_j 1 / 4 = (sqrt 2 / 4) 1, a_j = 1/4, q_j = sqrt(2) / 2,
    // s_ij = [i = j] / 4 - 1/8: S = [[1/8, -1/8], [-1/8, 1/8]], df = (1/4)^2 / (4/64) = 1.
    const robust = addClusterRobustInference(fit, data, { name: "site", labels: ["a", "a", "b", "b"] }).robust!;
    expectClose(robust.coefficients[0]!.estimate, 3.5, { rtol: 1e-15, label: "mean (hand)" });
    expectClose(robust.coefficients[0]!.standardError, 2, { rtol: 1e-12, label: "CR2 SE (hand)" });
    expectClose(robust.coefficients[0]!.df, 1, { rtol: 1e-12, label: "Satterthwaite df (hand)" });
    expect(robust).toMatchObject({ method: "CR2", cluster: "site", clusterCount: 2, smallestCluster: 2, largestCluster: 2 });
  });

  it("three clusters {1}, {2, 3}, {4}: SE^2 = 5/3 on 9/5 df", () => {
    // Singletons: A = (3/4)^{-1/2} = 2/sqrt 3, scores -5/sqrt 3 and 7/sqrt 3; the pair (-1.5, 0.5):
    // 1'A e = sqrt(2) (-1) = -sqrt 2. Meat 25/3 + 2 + 49/3 = 80/3, V = (1/16)(80/3) = 5/3.
    // df: a = (1/12, 1/4, 1/12), q = (1/(2 sqrt 3), sqrt(2)/2, 1/(2 sqrt 3)), S = diag(a) - q q'/4:
    // tr S = 1/4 (= M, the unbiasedness of CR2), sum S^2 = 5/144, df = (1/16) / (5/144) = 9/5.
    const robust = addClusterRobustInference(fit, data, { name: "site", labels: ["a", "b", "b", "c"] }).robust!;
    expectClose(robust.coefficients[0]!.standardError ** 2, 5 / 3, { rtol: 1e-12, label: "CR2 variance (hand)" });
    expectClose(robust.coefficients[0]!.df, 9 / 5, { rtol: 1e-12, label: "Satterthwaite df (hand)" });
  });

  it("the core routine: with Phi = I and M = 1/4 it gives the same variance and df", () => {
    const sandwich = cr2Sandwich({
      p: 1,
      design: Float64Array.of(1, 1, 1, 1),
      residuals: Float64Array.of(-2.5, -1.5, 0.5, 3.5),
      bread: Float64Array.of(0.25),
      clusters: [Int32Array.of(0, 1), Int32Array.of(2, 3)],
      workingCovariance: (rows) => {
        const phi = new Float64Array(rows.length * rows.length);
        for (let a = 0; a < rows.length; a += 1) phi[a * rows.length + a] = 1;
        return phi;
      },
    });
    expectClose(sandwich.covariance[0]!, 4, { rtol: 1e-12, label: "CR2 variance (hand)" });
    expectClose(sandwich.degreesOfFreedom([1]), 1, { rtol: 1e-12, label: "df (hand)" });
    expect(sandwich.singularClusters).toEqual([]);
  });
});

describe(`CR2 for the single-level model against R lm + written-out sandwich (${R_VERSION})`, () => {
  const d = multilevelDataset("clustered");
  const cluster = { name: "site", labels: d.site! };
  const cases: [string, "reml" | "fe", boolean][] = [
    ["cr2_reml", "reml", true],
    ["cr2_reml_intercept", "reml", false],
    ["cr2_fe", "fe", true],
  ];
  for (const [model, method, moderated] of cases) {
    it(`${model}: SEs, df and covariance`, () => {
      const ref = singleLevelCr2Reference("clustered", model);
      const design = moderated ? d.moderators!.design : undefined;
      const fit = fitMetaModel(d.data, { method, design });
      expectClose(fit.heterogeneity.tau2, ref.tau2, { rtol: 1e-9, atol: 1e-15, label: "tau2 (R dense REML)" });
      const robust = addClusterRobustInference(fit, d.data, cluster, design).robust!;
      expect(robust.coefficients.map((c) => c.term)).toEqual(ref.columns);
      robust.coefficients.forEach((c, j) => {
        expectClose(c.estimate, ref.beta[j]!, { rtol: 1e-9, label: `${model} ${c.term} estimate (R lm)` });
        expectClose(c.standardError, ref.se[j]!, { rtol: 1e-8, label: `${model} ${c.term} CR2 SE (R)` });
        expectClose(c.df, ref.df[j]!, { rtol: 1e-8, label: `${model} ${c.term} Satterthwaite df (R)` });
      });
      expectAllClose(robust.covariance, ref.covariance, { rtol: 1e-8, atol: 1e-14, label: `${model} CR2 covariance (R)` });
      expect(robust.clusterCount).toBe(8);
    });
  }

  it("works for every tau^2 method and for Knapp-Hartung fits (the sandwich uses the fitted weights)", () => {
    for (const method of ["dl", "pm", "he", "sj", "ml"] as const) {
      const fit = fitMetaModel(d.data, { method, test: "hksj", design: d.moderators!.design });
      const robust = addClusterRobustInference(fit, d.data, cluster, d.moderators!.design).robust!;
      expect(robust.coefficients).toHaveLength(2);
      robust.coefficients.forEach((c) => {
        expect(c.standardError).toBeGreaterThan(0);
        expect(c.df).toBeGreaterThan(1);
        expect(c.ciLower).toBeLessThan(c.estimate);
      });
    }
  });
});

describe(`CR2 for multilevel models against R with Phi = the fitted V (${R_VERSION})`, () => {
  it("within/between model, clustered by site", () => {
    const d = multilevelDataset("within_between");
    const ref = multilevelReference("within_between", "reml");
    const result = fitMultilevelModel(d.data, { levels: d.levels, design: d.moderators!.design, cluster: { name: "site", labels: d.site! } });
    const robust = result.robust!;
    robust.coefficients.forEach((c, j) => {
      expectClose(c.standardError, ref.cr2!.se[j]!, { rtol: 1e-7, label: `${c.term} CR2 SE (R)` });
      expectClose(c.df, ref.cr2!.df[j]!, { rtol: 1e-7, label: `${c.term} df (R)` });
    });
    expectAllClose(robust.covariance, ref.cr2!.covariance, { rtol: 1e-7, atol: 1e-14, label: "CR2 covariance (R)" });
  });

  it("three-level model with moderators, clustered by species (dense 18 x 18 Phi_j per cluster)", () => {
    const d = multilevelDataset("three_level");
    const ref = multilevelReference("three_level", "reml_moderated_cr2_species");
    const result = fitMultilevelModel(d.data, { levels: d.levels, design: d.moderators!.design, cluster: { name: "species", labels: d.species! } });
    const robust = result.robust!;
    expect(robust.clusterCount).toBe(4);
    robust.coefficients.forEach((c, j) => {
      expectClose(c.standardError, ref.cr2!.se[j]!, { rtol: 1e-7, label: `${c.term} CR2 SE (R)` });
      expectClose(c.df, ref.cr2!.df[j]!, { rtol: 1e-7, label: `${c.term} df (R)` });
    });
    // Four clusters leave few df: the robust tests carry the warning Tipton (2015) motivates.
    expect(result.warnings.map((w) => w.code)).toContain("few_clusters");
  });
});

describe("CR2 refuses what it cannot compute, with reasons", () => {
  const d = multilevelDataset("clustered");
  const fit = fitMetaModel(d.data);

  it("one cluster, empty labels, wrong length", () => {
    expect(() => addClusterRobustInference(fit, d.data, { name: "site", labels: d.site!.map(() => "one") })).toThrow(/single cluster \('one'\)/);
    expect(() => addClusterRobustInference(fit, d.data, { name: "site", labels: d.site!.map((s, i) => (i === 3 ? " " : s)) })).toThrow(/estimate 4: cluster variable 'site' is empty/);
    expect(() => addClusterRobustInference(fit, d.data, { name: "site", labels: d.site!.slice(1) })).toThrow(/23 labels for 24 estimates/);
  });

  it("case weights, a design that is not the fit's, and a multilevel result", () => {
    const weighted = metaData({ estimates: [0.1, 0.3, 0.2, 0.5], variances: [0.1, 0.1, 0.2, 0.1], caseWeights: [1, 2, 1, 1] });
    expect(() => addClusterRobustInference(fitMetaModel(weighted), weighted, { name: "site", labels: ["a", "a", "b", "b"] })).toThrow(/case-weighted/);
    const { design } = moderatorDesign(24, [{ kind: "numeric", name: "z", values: d.site!.map((_, i) => i) }]);
    expect(() => addClusterRobustInference(fitMetaModel(d.data, { design: d.moderators!.design }), d.data, { name: "site", labels: d.site! }, design)).toThrow(/do not reproduce the fitted coefficients/);
    const wb = multilevelDataset("within_between");
    const multilevel = fitMultilevelModel(wb.data, { levels: wb.levels, profileIntervals: false });
    expect(() => addClusterRobustInference(multilevel, wb.data, { name: "site", labels: wb.site! })).toThrow(ModelInputError);
  });

  it("clusters finer than the model's outermost level are refused (they would not be independent)", () => {
    const three = multilevelDataset("three_level");
    const sites = three.levels[1]!.values.map((site, i) => `${three.species![i]} ${site}`);
    expect(() => fitMultilevelModel(three.data, { levels: three.levels, profileIntervals: false, cluster: { name: "site", labels: sites } })).toThrow(
      /the random effects at level 'species' span clusters: species Parus has estimates in site 'Parus S1' and 'Parus S2'/,
    );
  });

  it("a cluster that alone determines a coefficient: generalised inverse, with a warning", () => {
    // The dummy 'only_g' is 1 in cluster g alone, so cluster g fits it exactly (B_g singular).
    const labels = d.site!;
    const { design } = moderatorDesign(24, [{ kind: "numeric", name: "only_site8", values: labels.map((s) => (s === "site8" ? 1 : 0)) }]);
    const result = addClusterRobustInference(fitMetaModel(d.data, { design }), d.data, { name: "site", labels }, design);
    const codes = result.warnings.map((w) => w.code);
    expect(codes).toContain("ill_conditioned_design");
    expect(result.warnings.find((w) => w.code === "ill_conditioned_design")!.message).toMatch(/'site8' alone determines/);
  });
});
