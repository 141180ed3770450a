/**
 * Sensitivity analyses of a stored run, refitted from the run's stored studies. Reference:
 * test/fixtures/r-stats/sensitivity-reference.json (make-sensitivity-fixtures.R, base R written
 * out from the formulas): the BCG vaccine trials (Colditz et al. 1994) with REML leave-one-out,
 * case-deletion diagnostics, subgroups by an invented three-zone grouping, and common-effect
 * trim-and-fill (L0).
 */
import { describe, expect, it } from "vitest";
import sensitivityReference from "@/test/fixtures/r-stats/sensitivity-reference.json";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { metaData } from "@/lib/stats/meta/meta-data";
import { metaResultToJson } from "@/lib/stats/meta/result-json";
import { moderatorDesign } from "@/lib/stats/meta/moderator-design";
import { parseStoredRun, type StoredRun } from "@/lib/analyses/stored-run";
import { cumulativeOrders, runSensitivity, runTrimAndFill, SENSITIVITY_BY_DEFAULT_MAX_STUDIES, sensitivityShownByDefault, speciesSubgroups, storedRunModel } from "@/lib/analyses/run-sensitivity";
import { baujatFigure, cumulativeFigure, influenceFigure, leaveOutFigure, speciesDiamonds } from "@/lib/analyses/sensitivity-figures";
import { funnelFigure } from "@/lib/analyses/run-figures";
import { refitIntervalPlotSvg } from "@/lib/plots/refit-interval-plot";
import { influencePlotSvg } from "@/lib/plots/influence-plot";
import { funnelPlotSvg } from "@/lib/plots/funnel-plot";
import { expectClose } from "@/test/helpers/expect-close";

interface Reference {
  data: { bcg: { y: number[]; v: number[]; ablat: number[]; zone: string[] } };
  influence: { bcg_reml: { studies: { hat: number; rstudent: number; dffits: number; cooks_distance: number }[] } };
  leave_one_out: { bcg_reml: { estimate: number; se: number; ci_lower: number; ci_upper: number; tau2: number }[] };
  subgroups_by_zone: { separate_reml: { groups: { group: string; estimate: number; ci_lower: number; ci_upper: number }[] } };
  trim_and_fill: { bcg_fe_l0: { side: string; k0: number; filled: number[]; adjusted_estimate: number } };
}
const reference = sensitivityReference as unknown as Reference;
const bcg = reference.data.bcg;

function storedRun(options: { model?: "reml" | "fe"; moderator?: boolean; species?: string[] } = {}): StoredRun {
  const method = options.model ?? "reml";
  const data = metaData({ estimates: bcg.y, variances: bcg.v });
  const design = options.moderator ? moderatorDesign(bcg.y.length, [{ kind: "numeric", name: "ablat", values: bcg.ablat }]).design : undefined;
  const fit = fitMetaModel(data, { method, ...(design ? { design } : {}) });
  return parseStoredRun({
    specification: {
      name: "BCG",
      outcome: "recruitment",
      level: "within_year",
      term: "linear",
      scale: "per_day",
      test: "z",
      model: method === "fe" ? { type: "common_effect" } : { type: "random_effects", tau2Estimator: "reml" },
      moderators: options.moderator ? ["ablat"] : [],
      confidenceLevel: 0.95,
    },
    selection: {
      link: "log",
      scale: "per_day",
      moderators: options.moderator ? [{ key: "ablat", kind: "numeric", label: "Absolute latitude", unit: "degrees" }] : [],
      studies: bcg.y.map((y, i) => ({
        estimateId: i + 1, siteCode: `T${String(i + 1).padStart(2, "0")}`, species: options.species?.[i] ?? "Parus major", year: null,
        value: y, standardError: Math.sqrt(bcg.v[i]!), n: 100, source: "uploaded", submissionId: 1, moderators: { ablat: bcg.ablat[i]! },
      })),
      excluded: [],
      submissions: [{ id: 1, sha256: "0".repeat(64) }],
      notes: [],
    },
    fit: metaResultToJson(fit),
  });
}

describe("sensitivity analyses of a stored run (BCG trials, R reference)", () => {
  it("rebuilds the run's model from its stored studies: the refit is the stored fit", () => {
    const run = storedRun({ moderator: true });
    const model = storedRunModel(run);
    const refit = fitMetaModel(model.data, model.options);
    refit.coefficients.forEach((c, j) => expectClose(c.estimate, run.fit.coefficients[j]!.estimate, { rtol: 1e-12, label: `stored ${c.term}` }));
  });

  it("leave-one-out: R's REML refits without each trial (estimate, CI and tau^2 to 1e-6)", () => {
    const run = storedRun();
    const sensitivity = runSensitivity(run);
    expect(sensitivity.leaveOut.available).toBe(true);
    if (!sensitivity.leaveOut.available) return;
    const omissions = sensitivity.leaveOut.result.omissions;
    expect(omissions).toHaveLength(13);
    omissions.forEach((o, i) => {
      const r = reference.leave_one_out.bcg_reml[i]!;
      expect(o.refit.available).toBe(true);
      if (!o.refit.available) return;
      const c = o.refit.fit.coefficients[0]!;
      expectClose(c.estimate, r.estimate, { rtol: 1e-6, label: `without trial ${i + 1}: estimate` });
      expectClose(c.ciLower, r.ci_lower, { rtol: 1e-6, label: `without trial ${i + 1}: CI lower` });
      expectClose(o.refit.fit.heterogeneity.tau2, r.tau2, { rtol: 1e-6, label: `without trial ${i + 1}: tau^2` });
    });
    const figure = leaveOutFigure(run, sensitivity.leaveOut.result, 0);
    expect(refitIntervalPlotSvg(figure.input).match(/class="refit-row"/g)).toHaveLength(13);
    expect(figure.csv.split("\r\n")[0]).toBe("refit,left_out,k,estimate,standard_error,ci_lower,ci_upper,p_value,tau2,i2_percent,note");
  });

  it("influence: R's studentized deleted residuals, DFFITS, Cook's distances and hat values (1e-6)", () => {
    const run = storedRun();
    const sensitivity = runSensitivity(run);
    if (!sensitivity.influence.available) throw new Error(sensitivity.influence.reason);
    sensitivity.influence.result.studies.forEach((s, i) => {
      const r = reference.influence.bcg_reml.studies[i]!;
      expect(s.deleted.available).toBe(true);
      if (!s.deleted.available) return;
      expectClose(s.deleted.studentizedDeletedResidual, r.rstudent, { rtol: 1e-6, label: `rstudent ${i + 1}` });
      expectClose(s.deleted.dffits, r.dffits, { rtol: 1e-6, label: `DFFITS ${i + 1}` });
      expectClose(s.deleted.cooksDistance, r.cooks_distance, { rtol: 1e-6, label: `Cook's D ${i + 1}` });
      expectClose(s.leverage, r.hat, { rtol: 1e-6, label: `hat ${i + 1}` });
    });
    const svg = influencePlotSvg(influenceFigure(run, sensitivity.influence.result).input);
    expect(svg.match(/class="influence-panel"/g)).toHaveLength(4);
    expect(baujatFigure(run, sensitivity.influence.result).input.points).toHaveLength(13);
  });

  it("cumulative: one step per distinct order value, the last step the full fit", () => {
    const run = storedRun({ moderator: true });
    expect(cumulativeOrders(run).map((o) => o.key)).toEqual(["precision", "ablat"]);
    const sensitivity = runSensitivity(run, "ablat");
    if (!sensitivity.cumulative.available) throw new Error(sensitivity.cumulative.reason);
    const steps = sensitivity.cumulative.result.steps;
    expect(steps).toHaveLength(new Set(bcg.ablat).size);
    expect(steps.map((s) => s.value)).toEqual([...new Set(bcg.ablat)].sort((a, b) => a - b));
    const last = steps.at(-1)!.refit;
    expect(last.available).toBe(true);
    if (last.available) expectClose(last.fit.coefficients[1]!.estimate, run.fit.coefficients[1]!.estimate, { rtol: 1e-12, label: "last step = stored fit" });
    // The first steps cannot support two coefficients; they stay in the plot with the reason.
    expect(steps[0]!.refit.available).toBe(false);
    const figure = cumulativeFigure(run, sensitivity.cumulative.result, 1, sensitivity.order, sensitivity.labels);
    expect(refitIntervalPlotSvg(figure.input)).toContain("not available:");
    expect(() => runSensitivity(run, "year")).toThrow(/no cumulative order "year"/);
  });

  it("species diamonds: R's separate-tau^2 subgroup estimates (zones as species, 1e-6)", () => {
    const run = storedRun({ species: bcg.zone });
    const subgroups = speciesSubgroups(run);
    if (!subgroups.available) throw new Error(subgroups.reason);
    expect(subgroups.result.tau2).toBe("separate");
    const diamonds = speciesDiamonds(subgroups.result);
    for (const r of reference.subgroups_by_zone.separate_reml.groups) {
      const d = diamonds.find((x) => x.group === r.group)!;
      expectClose(d.estimate, r.estimate, { rtol: 1e-6, label: `${r.group} estimate` });
      expectClose(d.ciUpper, r.ci_upper, { rtol: 1e-6, label: `${r.group} CI upper` });
    }
    expect(speciesSubgroups(storedRun()).available).toBe(false);
    expect(speciesSubgroups(storedRun({ moderator: true, species: bcg.zone }))).toEqual({ available: false, reason: "subgroup diamonds are drawn for a pooled estimate; this run is a meta-regression" });
  });

  it("a species with one estimate gets a common tau^2 instead of a refusal", () => {
    const species = bcg.zone.map((z, i) => (i === 0 ? "lonely" : z));
    const subgroups = speciesSubgroups(storedRun({ species }));
    expect(subgroups.available && subgroups.result.tau2).toBe("common");
  });

  it("trim-and-fill of a common-effect run: R's k0 = 4 on the right and the filled estimates (1e-9)", () => {
    const run = storedRun({ model: "fe" });
    const filled = runTrimAndFill(run);
    if (!filled.available) throw new Error(filled.reason);
    const r = reference.trim_and_fill.bcg_fe_l0;
    expect(filled.result.k0).toBe(r.k0);
    expect(filled.result.side).toBe(r.side);
    filled.result.filled.forEach((f, i) => expectClose(f.estimate, r.filled[i]!, { rtol: 1e-9, label: `filled ${i + 1}` }));
    expectClose(filled.result.adjusted.coefficients[0]!.estimate, r.adjusted_estimate, { rtol: 1e-9, label: "adjusted estimate" });
    const funnel = funnelFigure(run, filled.result.filled.map((f) => ({ estimate: f.estimate, standardError: f.standardError })))!;
    expect(funnelPlotSvg(funnel.input).match(/class="funnel-filled"/g)).toHaveLength(4);
    expect(runTrimAndFill(storedRun({ moderator: true })).available).toBe(false);
  });

  it(`is shown unasked for runs of up to ${SENSITIVITY_BY_DEFAULT_MAX_STUDIES} estimates, and not for a run whose stored specification no longer parses`, () => {
    const run = storedRun();
    expect(sensitivityShownByDefault(run)).toBe(true);
    const many = { ...run, selection: { ...run.selection, studies: Array.from({ length: SENSITIVITY_BY_DEFAULT_MAX_STUDIES + 1 }, (_, i) => ({ ...run.selection.studies[i % run.selection.studies.length]!, estimateId: i + 1 })) } };
    expect(sensitivityShownByDefault(many)).toBe(false);
    const unreadable = { ...run, specification: { ...run.specification, test: "no such test" } };
    expect(sensitivityShownByDefault(unreadable)).toBe(false);
    expect(() => runSensitivity(unreadable)).toThrow(/no longer validates/);
  });
});
