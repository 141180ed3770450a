/**
 * Leave-one-out (by estimate and by group) and cumulative meta-analysis. Checked against base R
 * (test/fixtures/r-stats/make-sensitivity-fixtures.R, R 4.2.2: lm() with weights, REML by
 * optimize() + uniroot(), DL from its formula) on the BCG trials, and by brute force: each row
 * must equal fitMetaModel on the remaining (or included) studies, refitted here.
 */
import { describe, expect, it } from "vitest";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { metaData } from "@/lib/stats/meta/meta-data";
import type { MetaModelResult } from "@/lib/stats/meta/meta-result";
import { moderatorDesign } from "@/lib/stats/meta/moderator-design";
import { cumulativeMetaAnalysis } from "@/lib/stats/meta/sensitivity/cumulative";
import { leaveOut } from "@/lib/stats/meta/sensitivity/leave-out";
import { cumulativeToJson, leaveOutToJson } from "@/lib/stats/meta/sensitivity/sensitivity-json";
import { subsetDesign, subsetMetaData, type RefitOutcome } from "@/lib/stats/meta/sensitivity/subset-fit";
import { expectAllClose, expectClose } from "@/test/helpers/expect-close";
import { bcg, latitudeDesign, reference, zone, type RPooled } from "./sensitivity-fixture";

function fitOf(refit: RefitOutcome): MetaModelResult {
  if (!refit.available) throw new Error(`refit unavailable: ${refit.reason}`);
  return refit.fit;
}

function checkPooled(fit: MetaModelResult, expected: RPooled, rtol: number, label: string) {
  const pooled = fit.coefficients[0]!;
  expectClose(pooled.estimate, expected.estimate, { rtol, label: `${label} estimate (R)` });
  expectClose(pooled.standardError, expected.se, { rtol, label: `${label} SE (R)` });
  expectClose(pooled.ciLower, expected.ci_lower, { rtol, label: `${label} CI lower (R)` });
  expectClose(pooled.ciUpper, expected.ci_upper, { rtol, label: `${label} CI upper (R)` });
  expectClose(fit.heterogeneity.tau2, expected.tau2, { rtol, atol: 1e-12, label: `${label} tau2 (R)` });
  expectClose(fit.heterogeneity.i2, expected.i2, { rtol, atol: 1e-9, label: `${label} I2 (R)` });
  expectClose(fit.heterogeneity.q, expected.q, { rtol: 1e-10, label: `${label} Q (R)` });
}

describe("leave-one-out", () => {
  it("by estimate, REML: R's pooled estimate, SE, CI, tau2, I2 and Q without each BCG trial", () => {
    const result = leaveOut(bcg, { method: "reml" });
    expect(result.by).toBe("estimate");
    expect(result.omissions).toHaveLength(13);
    result.omissions.forEach((o, i) => {
      expect(o.rows).toEqual([i]);
      expect(o.label).toBe(`study ${i + 1}`);
      checkPooled(fitOf(o.refit), reference.leave_one_out.bcg_reml[i]!, 1e-7, `without trial ${i + 1}`);
    });
    expect(result.warnings).toEqual([]);
  });

  it("by group: R's values without each zone (every trial of the zone left out together)", () => {
    const result = leaveOut(bcg, { method: "reml", groups: zone });
    expect(result.by).toBe("group");
    expect(result.omissions.map((o) => o.label)).toEqual(["mid", "north", "south"]);
    result.omissions.forEach((o, g) => {
      const expected = reference.leave_zone_out[g]!;
      expect(o.label).toBe(expected.omitted);
      expect(o.rows).toEqual(zone.flatMap((z, i) => (z === o.label ? [i] : [])));
      checkPooled(fitOf(o.refit), expected, 1e-7, `without zone ${o.label}`);
    });
  });

  it("brute force with a moderator and Knapp-Hartung: each omission equals fitMetaModel on the rest", () => {
    const result = leaveOut(bcg, { method: "dl", test: "hksj", design: latitudeDesign, groups: zone });
    for (const o of result.omissions) {
      const rows = Array.from({ length: 13 }, (_, i) => i).filter((i) => !o.rows.includes(i));
      const direct = fitMetaModel(subsetMetaData(bcg, rows), { method: "dl", test: "hksj", design: subsetDesign(latitudeDesign, rows) });
      const fit = fitOf(o.refit);
      expectAllClose(fit.coefficients.map((c) => c.estimate), direct.coefficients.map((c) => c.estimate), { rtol: 1e-14, label: `${o.label} coefficients` });
      expectAllClose(fit.coefficients.map((c) => c.ciUpper), direct.coefficients.map((c) => c.ciUpper), { rtol: 1e-14, label: `${o.label} CI` });
      expect(fit.test.test).toBe("hksj");
      expect(fit.heterogeneity.tau2).toBe(direct.heterogeneity.tau2);
    }
  });

  it("with case weights a row is left out with all its copies: the fit of the data without that row", () => {
    const weighted = metaData({ estimates: bcg.estimates, variances: bcg.variances, caseWeights: [1, 2, 1, 3, 1, 1, 2, 1, 1, 1, 2, 1, 1] });
    const result = leaveOut(weighted, { method: "reml" });
    const without = fitOf(result.omissions[3]!.refit);
    const rows = Array.from({ length: 13 }, (_, i) => i).filter((i) => i !== 3);
    const direct = fitMetaModel(subsetMetaData(weighted, rows), { method: "reml" });
    expect(without.k).toBe(direct.k);
    expect(without.k).toBe(18 - 3); // the case weights sum to 18
    expect(without.coefficients[0]!.estimate).toBe(direct.coefficients[0]!.estimate);
  });

  it("JSON: snake_case, 1-based rows, the full model, finite numbers", () => {
    const json = leaveOutToJson(leaveOut(bcg, { method: "reml" })) as { analysis: string; omissions: { omitted: string; rows: number[]; tau2: number; coefficients: { estimate: number }[] }[]; model: { heterogeneity: { tau2: number } } };
    expect(json.analysis).toBe("leave_out");
    expect(json.omissions[0]!.rows).toEqual([1]);
    expectClose(json.omissions[0]!.coefficients[0]!.estimate, reference.leave_one_out.bcg_reml[0]!.estimate, { rtol: 1e-7, label: "JSON estimate (R)" });
    expectClose(json.model.heterogeneity.tau2, reference.influence.bcg_reml.tau2, { rtol: 1e-7, label: "JSON full tau2 (R)" });
  });

  it("hostile: two studies (each omission leaves one: unavailable with the reason), one group, bad groups", () => {
    const two = metaData({ estimates: [0.1, 0.5], variances: [0.01, 0.02] });
    const result = leaveOut(two);
    for (const o of result.omissions) {
      expect(o.refit.available).toBe(false);
      if (!o.refit.available) expect(o.refit.reason).toMatch(/one study pools nothing/);
    }
    expect(result.warnings.map((w) => w.code)).toEqual(["refit_unavailable"]);
    const json = leaveOutToJson(result) as { omissions: { available: boolean; note: string; tau2: null }[] };
    expect(json.omissions[0]).toMatchObject({ available: false, tau2: null });
    expect(json.omissions[0]!.note).toMatch(/one study pools nothing/);
    expect(() => leaveOut(bcg, { groups: Array(13).fill("only") })).toThrow(/at least two groups; every study is in 'only'/);
    expect(() => leaveOut(bcg, { groups: ["a", "b"] })).toThrow(/13 studies but 2 group names/);
    expect(() => leaveOut(metaData({ estimates: [0.2], variances: [0.1] }))).toThrow(/one study pools nothing/);
    // Leaving out the only study of a moderator level empties that level's column.
    const habitat = moderatorDesign(13, [{ kind: "categorical", name: "habitat", values: [...Array(12).fill("oak"), "pine"] }]).design;
    const lone = leaveOut(bcg, { design: habitat }).omissions[12]!.refit;
    expect(lone.available).toBe(false);
    if (!lone.available) expect(lone.reason).toMatch(/collinear/);
  });
});

describe("cumulative meta-analysis", () => {
  it("ordered by latitude, DL: R's values at every step; trials at the same latitude enter together", () => {
    const result = cumulativeMetaAnalysis(bcg, { kind: "numeric", name: "ablat", values: reference.data.bcg.ablat }, { method: "dl" });
    const expected = reference.cumulative_dl_by_latitude;
    expect(result.steps.map((s) => s.value)).toEqual(expected.map((e) => e.value));
    expect(result.steps.map((s) => s.studies)).toEqual(expected.map((e) => e.studies));
    expect(result.steps[0]!.added).toEqual([4, 7]); // trials 5 and 8 both at 13 degrees
    result.steps.forEach((step, s) => {
      const e = expected[s]!;
      if (e.studies < 2) {
        expect(step.refit.available).toBe(false);
        return;
      }
      checkPooled(fitOf(step.refit), e as RPooled, 1e-9, `up to latitude ${e.value}`);
    });
    expect(result.steps.at(-1)!.refit).toEqual({ available: true, fit: result.full });
  });

  it("brute force, REML, descending, text order: each step equals fitMetaModel on the studies included so far", () => {
    const byZone = cumulativeMetaAnalysis(bcg, { kind: "text", name: "zone", values: zone }, { method: "reml", descending: true });
    expect(byZone.steps.map((s) => s.value)).toEqual(["south", "north", "mid"]);
    let included: number[] = [];
    for (const step of byZone.steps) {
      included = [...included, ...step.added];
      expect(step.studies).toBe(included.length);
      const direct = fitMetaModel(subsetMetaData(bcg, included), { method: "reml" });
      expectClose(fitOf(step.refit).coefficients[0]!.estimate, direct.coefficients[0]!.estimate, { rtol: 1e-10, label: `up to ${step.value}` });
      expectClose(fitOf(step.refit).heterogeneity.tau2, direct.heterogeneity.tau2, { rtol: 1e-8, atol: 1e-14, label: `tau2 up to ${step.value}` });
    }
    // The file order does not matter: ties and rows are sorted, then the last step is the full fit.
    const reversed = subsetMetaData(bcg, Array.from({ length: 13 }, (_, i) => 12 - i));
    const again = cumulativeMetaAnalysis(reversed, { kind: "text", name: "zone", values: [...zone].reverse() }, { method: "reml", descending: true });
    expectAllClose(
      again.steps.map((s) => fitOf(s.refit).coefficients[0]!.estimate),
      byZone.steps.map((s) => fitOf(s.refit).coefficients[0]!.estimate),
      { rtol: 1e-9, label: "reversed file order" },
    );
  });

  it("JSON rows, the unavailable first step, and refused order columns", () => {
    const one = cumulativeMetaAnalysis(bcg, { kind: "numeric", name: "row", values: Array.from({ length: 13 }, (_, i) => i) });
    expect(one.steps).toHaveLength(13);
    expect(one.steps[0]!.refit.available).toBe(false);
    expect(one.warnings).toEqual([]); // the first step is expected to be unavailable
    const json = cumulativeToJson(one) as { order: { column: string }; steps: { value: number; added_rows: number[]; available: boolean; note: string | null }[] };
    expect(json.order.column).toBe("row");
    expect(json.steps[0]).toMatchObject({ value: 0, added_rows: [1], available: false });
    expect(json.steps[0]!.note).toMatch(/one study pools nothing/);
    expect(() => cumulativeMetaAnalysis(bcg, { kind: "numeric", name: "year", values: [...Array(12).fill(2000), Number.NaN] })).toThrow(/study 13: the order value 'year' is NaN/);
    expect(() => cumulativeMetaAnalysis(bcg, { kind: "text", name: "zone", values: [...zone.slice(0, 12), ""] })).toThrow(/study 13: the order value 'zone' is empty/);
    expect(() => cumulativeMetaAnalysis(bcg, { kind: "text", name: "zone", values: zone.slice(1) })).toThrow(/13 studies but 12 values/);
  });
});
