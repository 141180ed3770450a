/**
 * Multilevel input the engine must refuse with a reason, and awkward input it must fit honestly.
 * Expected behaviour follows from the definitions (a level with one group cannot be told apart
 * from the mean; two levels that group the estimates identically share one variance); numbers are
 * checked against closed forms derived beside each check.
 */
import { describe, expect, it } from "vitest";
import { metaData } from "@/lib/stats/meta/meta-data";
import { moderatorDesign } from "@/lib/stats/meta/moderator-design";
import { fitMultilevelModel } from "@/lib/stats/meta/multilevel/fit-multilevel-model";
import { nestedLevels } from "@/lib/stats/meta/multilevel/nested-levels";
import { metaResultToJson } from "@/lib/stats/meta/result-json";
import { ModelInputError } from "@/lib/stats/model-error";
import { expectClose } from "@/test/helpers/expect-close";
import { multilevelDataset } from "./multilevel-datasets";

const six = metaData({ estimates: [0.1, 0.3, -0.2, 0.5, 0.05, 0.4], variances: [0.02, 0.05, 0.04, 0.03, 0.06, 0.02] });
const sites = ["a", "a", "b", "b", "c", "c"];
const ids = ["1", "2", "3", "4", "5", "6"];

describe("refused multilevel input (ModelInputError with a reason)", () => {
  it("no level, a level with one group, identical levels, empty and missing labels, repeated names", () => {
    expect(() => fitMultilevelModel(six, { levels: [] })).toThrow(/at least one level/);
    expect(() => fitMultilevelModel(six, { levels: [{ name: "site", values: sites.map(() => "a") }] })).toThrow(/level 'site' has a single group \('a'\)/);
    expect(() => fitMultilevelModel(six, { levels: [{ name: "site", values: sites }, { name: "plot", values: sites.map((s) => `${s}1`) }] })).toThrow(
      /levels 'site' and 'plot' group the estimates identically/,
    );
    expect(() => fitMultilevelModel(six, { levels: [{ name: "site", values: ["a", "a", "", "b", "c", "c"] }] })).toThrow(/estimate 3: level 'site' is empty/);
    expect(() => fitMultilevelModel(six, { levels: [{ name: "site", values: sites.slice(1) }] })).toThrow(/level 'site' has 5 labels for 6 estimates/);
    expect(() => fitMultilevelModel(six, { levels: [{ name: "site", values: sites }, { name: "site", values: ids }] })).toThrow(/level 'site' is given twice/);
  });

  it("estimators other than REML and ML, case weights, bad options, too few estimates", () => {
    expect(() => fitMultilevelModel(six, { levels: [{ name: "site", values: sites }], method: "dl" as "reml" })).toThrow(/fitted by reml or ml, not 'dl'/);
    const weighted = metaData({ estimates: [0.1, 0.3, 0.2, 0.4], variances: [0.1, 0.1, 0.1, 0.1], caseWeights: [1, 2, 1, 1] });
    expect(() => fitMultilevelModel(weighted, { levels: [{ name: "site", values: ["a", "a", "b", "b"] }] })).toThrow(/case weights are not supported/);
    expect(() => fitMultilevelModel(six, { levels: [{ name: "site", values: sites }], confidenceLevel: 1 })).toThrow(/confidence level/);
    expect(() => fitMultilevelModel(six, { levels: [{ name: "site", values: sites }], maxIterations: 0 })).toThrow(/maxIterations/);
    const { design } = moderatorDesign(6, [
      { kind: "numeric", name: "x1", values: [1, 2, 3, 4, 5, 6] },
      { kind: "numeric", name: "x2", values: [1, 4, 9, 16, 25, 36] },
      { kind: "numeric", name: "x3", values: [1, 0, 1, 0, 2, 1] },
      { kind: "numeric", name: "x4", values: [3, 1, 4, 1, 5, 9] },
    ]);
    expect(() => fitMultilevelModel(six, { levels: [{ name: "site", values: sites }, { name: "estimate", values: ids }], design })).toThrow(
      /6 estimates cannot support 5 coefficients and 2 variance components/,
    );
    expect(() => fitMultilevelModel(metaData({ estimates: [0.2], variances: [0.1] }), { levels: [{ name: "site", values: ["a"] }] })).toThrow(/one study pools nothing/);
  });

  it("a rank-deficient design names the collinear terms before any fitting", () => {
    expect(() =>
      moderatorDesign(6, [
        { kind: "numeric", name: "warmth", values: [1, 2, 3, 4, 5, 6] },
        { kind: "numeric", name: "warmth_f", values: [33.8, 35.6, 37.4, 39.2, 41, 42.8] },
      ]),
    ).toThrow(/'warmth_f' is a linear combination of 'intercept' and 'warmth'/);
  });

  it("refusals are ModelInputErrors", () => {
    expect(() => fitMultilevelModel(six, { levels: [] })).toThrow(ModelInputError);
  });
});

describe("awkward multilevel input that must fit, honestly reported", () => {
  it("groups are paths: the same site code under two species is two sites", () => {
    const levels = nestedLevels(8, [
      { name: "species", values: ["tit", "tit", "tit", "tit", "flycatcher", "flycatcher", "flycatcher", "flycatcher"] },
      { name: "site", values: ["S1", "S1", "S2", "S2", "S1", "S1", "S2", "S2"] },
      { name: "year", values: ["1", "2", "1", "2", "1", "2", "1", "2"] },
    ]);
    expect(levels.groupCounts).toEqual([2, 4, 8]);
    expect(levels.labels[1]).toEqual(["species tit / site S1", "species tit / site S2", "species flycatcher / site S1", "species flycatcher / site S2"]);
    expect(Array.from(levels.parents[1]!)).toEqual([0, 0, 1, 1]);
  });

  it("identical estimates: every variance at 0 with warnings; the pooled mean is the common-effect one", () => {
    const same = metaData({ estimates: [0.2, 0.2, 0.2, 0.2, 0.2, 0.2], variances: [0.02, 0.05, 0.04, 0.03, 0.06, 0.02] });
    const fit = fitMultilevelModel(same, { levels: [{ name: "site", values: sites }, { name: "estimate", values: ids }] });
    expect(fit.fit.converged).toBe(true);
    expect(fit.multilevel!.components.map((c) => c.sigma2)).toEqual([0, 0]);
    expect(fit.warnings.filter((w) => w.code === "boundary_variance_component")).toHaveLength(2);
    expectClose(fit.coefficients[0]!.estimate, 0.2, { rtol: 1e-12, label: "mean of identical estimates" });
    // Common effect: SE = 1 / sqrt(sum 1/v) = 1 / sqrt(50 + 20 + 25 + 33.33 + 16.67 + 50) = 1 / sqrt(195).
    expectClose(fit.coefficients[0]!.standardError, 1 / Math.sqrt(195), { rtol: 1e-10, label: "common-effect SE (closed form)" });
    for (const component of fit.multilevel!.components) {
      expect(component.interval.available && component.interval.lower).toBe(0);
      expect(component.interval.available && component.interval.upper).toBeGreaterThan(0);
      expect(component.test.available && component.test.pValue).toBe(1);
    }
    expect(fit.warnings.map((w) => w.code)).toContain("few_clusters");
  });

  it("two estimates, one level: REML on one residual df still fits", () => {
    const two = metaData({ estimates: [0.12, 0.61], variances: [0.04, 0.09] });
    const fit = fitMultilevelModel(two, { levels: [{ name: "study", values: ["a", "b"] }] });
    expect(fit.fit.converged).toBe(true);
    expect(fit.multilevel!.components[0]!.sigma2).toBeGreaterThan(0);
  });

  it("an iteration limit that is too small is reported, not hidden", () => {
    const d = multilevelDataset("three_level");
    const fit = fitMultilevelModel(d.data, { levels: d.levels, maxIterations: 1, profileIntervals: false });
    expect(fit.fit.converged).toBe(false);
    const message = fit.warnings.find((w) => w.code === "non_convergence")!.message;
    expect(message).toMatch(/did not converge after 1 steps \(the iteration limit \(1\) was reached\)/);
    // No interval, test or standard error is measured from a point that is not the maximum.
    for (const component of fit.multilevel!.components) {
      expect(component.standardError).toBeNull();
      expect(component.test.available).toBe(false);
      expect(!component.test.available && component.test.reason).toMatch(/did not converge/);
    }
  });

  it("without profile intervals the boundary tests are still computed (from the refits without each level)", () => {
    const d = multilevelDataset("three_level");
    const full = fitMultilevelModel(d.data, { levels: d.levels });
    const quick = fitMultilevelModel(d.data, { levels: d.levels, profileIntervals: false });
    quick.multilevel!.components.forEach((c, l) => {
      expect(c.interval.available).toBe(false);
      const expected = full.multilevel!.components[l]!.test;
      expect(c.test.available && expected.available).toBe(true);
      if (c.test.available && expected.available) expectClose(c.test.statistic, expected.statistic, { rtol: 1e-7, atol: 1e-9, label: "LRT statistic" });
    });
  });

  it("the result is frozen, and every number in its JSON is finite", () => {
    const d = multilevelDataset("three_level");
    const fit = fitMultilevelModel(d.data, { levels: d.levels, design: d.moderators!.design });
    expect(Object.isFrozen(fit)).toBe(true);
    expect(Object.isFrozen(fit.multilevel!.components[0])).toBe(true);
    const json = metaResultToJson(fit);
    expect(JSON.parse(JSON.stringify(json))).toEqual(json);
  });
});
