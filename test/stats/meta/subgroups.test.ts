/**
 * Subgroup analysis, checked against base R (test/fixtures/r-stats/make-sensitivity-fixtures.R,
 * R 4.2.2) on the BCG trials in an invented three-zone grouping: separate REML fits per zone with
 * Q_between = sum (mu_g - mu_bar)^2 / SE_g^2 against chi-square(2) (pchisq), and one REML
 * mixed-effects model with zone contrasts, its Wald test of the contrasts and the zone means.
 */
import { describe, expect, it } from "vitest";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { metaData } from "@/lib/stats/meta/meta-data";
import { subgroupAnalysis } from "@/lib/stats/meta/sensitivity/subgroups";
import { subgroupsToJson } from "@/lib/stats/meta/sensitivity/sensitivity-json";
import { subsetMetaData } from "@/lib/stats/meta/sensitivity/subset-fit";
import { expectClose } from "@/test/helpers/expect-close";
import { bcg, reference, zone } from "./sensitivity-fixture";

describe("subgroups with separate tau^2", () => {
  it("R's subgroup estimates, SEs and tau2, and Q_between on 2 df", () => {
    const result = subgroupAnalysis(bcg, zone, { method: "reml", name: "zone" });
    const expected = reference.subgroups_by_zone.separate_reml;
    expect(result.groups.map((g) => g.group)).toEqual(expected.groups.map((g) => g.group));
    result.groups.forEach((g, j) => {
      const e = expected.groups[j]!;
      expect(g.studies).toBe(e.studies);
      expectClose(g.estimate, e.estimate, { rtol: 1e-7, label: `${g.group} estimate (R)` });
      expectClose(g.standardError, e.se, { rtol: 1e-7, label: `${g.group} SE (R)` });
      expectClose(g.ciLower, e.ci_lower, { rtol: 1e-7, label: `${g.group} CI (R)` });
      expectClose(g.fit!.heterogeneity.tau2, e.tau2, { rtol: 1e-7, label: `${g.group} tau2 (R)` });
    });
    expect(result.test).toMatchObject({ distribution: "chi-square", df: 2, denominatorDf: null });
    expectClose(result.test.statistic, expected.q_between, { rtol: 1e-7, label: "Q_between (R)" });
    expectClose(result.test.pValue, expected.p_value, { rtol: 1e-6, label: "p of Q_between (R pchisq)" });
    expect(result.commonModel).toBeNull();
    // Each subgroup's fit is the plain fit of its studies.
    const north = fitMetaModel(subsetMetaData(bcg, result.groups[1]!.rows), { method: "reml" });
    expect(result.groups[1]!.estimate).toBe(north.coefficients[0]!.estimate);
    // The few-studies warnings of the small zones are carried, named by subgroup.
    expect(result.warnings.map((w) => w.message)).toEqual(expect.arrayContaining([expect.stringMatching(/^subgroup 'mid': tau\^2 from only 3 studies/)]));
  });

  it("refuses a subgroup of one estimate, naming it", () => {
    const groups = [...zone.slice(0, 12), "east"];
    expect(() => subgroupAnalysis(bcg, groups)).toThrow(/subgroup\(s\) 'east' have a single estimate, which has no tau\^2 of its own; merge or drop them, or use a common tau\^2/);
  });
});

describe("subgroups with a common tau^2", () => {
  it("R's common tau2, zone means with SEs, and the Wald test of the contrasts (chi-square, 2 df)", () => {
    const result = subgroupAnalysis(bcg, zone, { method: "reml", tau2: "common", name: "zone" });
    const expected = reference.subgroups_by_zone.common_reml;
    expectClose(result.commonModel!.heterogeneity.tau2, expected.tau2, { rtol: 1e-7, label: "common tau2 (R)" });
    result.groups.forEach((g, j) => {
      expect(g.group).toBe(expected.groups[j]!.group);
      expectClose(g.estimate, expected.groups[j]!.estimate, { rtol: 1e-7, label: `${g.group} mean (R)` });
      expectClose(g.standardError, expected.groups[j]!.se, { rtol: 1e-7, label: `${g.group} SE (R)` });
      expect(g.fit).toBeNull();
    });
    expectClose(result.test.statistic, expected.q_m, { rtol: 1e-7, label: "Q_M (R)" });
    expectClose(result.test.pValue, expected.p_value, { rtol: 1e-6, label: "p of Q_M (R)" });
    expect(result.commonModel!.moderatorTest!.terms).toEqual(["zone[north]", "zone[south]"]);
  });

  it("under Knapp-Hartung the test is F(G - 1, k - G)", () => {
    const result = subgroupAnalysis(bcg, zone, { tau2: "common", test: "hksj" });
    expect(result.test).toMatchObject({ distribution: "F", df: 2, denominatorDf: 10 });
  });

  it("keeps a subgroup of one estimate: its mean is its estimate, SE sqrt(v + tau2), with a warning", () => {
    const groups = [...zone.slice(0, 12), "east"];
    const result = subgroupAnalysis(bcg, groups, { tau2: "common" });
    const east = result.groups.find((g) => g.group === "east")!;
    const tau2 = result.commonModel!.heterogeneity.tau2;
    expectClose(east.estimate, bcg.estimates[12]!, { rtol: 1e-9, label: "lone subgroup mean = its estimate" });
    expectClose(east.standardError, Math.sqrt(bcg.variances[12]! + tau2), { rtol: 1e-9, label: "lone subgroup SE" });
    expect(result.warnings.find((w) => w.code === "few_studies")!.message).toMatch(/'east' have a single estimate/);
  });
});

describe("hostile input and JSON", () => {
  it("one subgroup, mismatched or empty names", () => {
    expect(() => subgroupAnalysis(bcg, Array(13).fill("all"))).toThrow(/at least two subgroups; every study is in 'all'/);
    expect(() => subgroupAnalysis(bcg, zone.slice(2))).toThrow(/13 studies but 11 group names/);
    expect(() => subgroupAnalysis(bcg, [...zone.slice(0, 12), ""])).toThrow(/study 13: the group name is empty/);
    // A subgroup whose two estimates agree exactly (Q = 0) cannot be tested with Knapp-Hartung: named.
    const data = metaData({ estimates: [0, 0, 0.3, 0.5], variances: [0.01, 0.01, 0.02, 0.03] });
    expect(() => subgroupAnalysis(data, ["a", "a", "b", "b"], { test: "hksj" })).toThrow(/subgroup 'a' cannot be pooled: Knapp-Hartung/);
  });

  it("JSON: snake_case groups, the test, the overall fit", () => {
    const json = subgroupsToJson(subgroupAnalysis(bcg, zone, { name: "zone" })) as {
      analysis: string;
      by: string;
      tau2: string;
      groups: { group: string; rows: number[]; tau2: number }[];
      test: { df: number; p_value: number };
    };
    expect(json).toMatchObject({ analysis: "subgroups", by: "zone", tau2: "separate" });
    expect(json.groups[0]!.rows).toEqual([9, 12, 13]);
    expectClose(json.test.p_value, reference.subgroups_by_zone.separate_reml.p_value, { rtol: 1e-6, label: "JSON p (R)" });
  });
});
