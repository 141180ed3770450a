/**
 * Figures of an analysis run, built from a stored run of the BCG vaccine trials (Colditz et al.
 * 1994) fitted by the engine. The fitted band of the bubble plot is checked against R's REML
 * meta-regression prediction (test/fixtures/r-stats/make-meta-fixtures.R, meta-reference.json:
 * prediction_mean and prediction_se at the mean latitude), the forest rows against the studies.
 */
import { describe, expect, it } from "vitest";
import reference from "@/test/fixtures/r-stats/meta-reference.json";
import datasets from "@/test/fixtures/r-stats/meta-datasets.json";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { metaResultToJson } from "@/lib/stats/meta/result-json";
import { bubbleFigures, fittedBand, forestFigure, funnelFigure, residualFunnelFigure } from "@/lib/analyses/run-figures";
import { parseStoredRun, type StoredRun } from "@/lib/analyses/stored-run";
import { normalQuantileStd } from "@/lib/stats/distributions/normal";
import { expectClose } from "@/test/helpers/expect-close";
import { referenceDataset } from "../stats/meta/reference-datasets";

const bcg = (datasets as unknown as { datasets: Record<string, { y: number[]; v: number[]; moderators: { name: string; values: number[] }[] }> }).datasets.bcg!;
const rModerated = (reference as unknown as { reference: { bcg: { moderated: { predict_at: number[]; methods: { reml: { prediction_mean: number; prediction_se: number; beta: number[] } } } } } }).reference.bcg.moderated;

function storedRun(withModerator: boolean): StoredRun {
  const { data, moderators } = referenceDataset("bcg");
  const fit = fitMetaModel(data, withModerator ? { design: moderators!.design } : {});
  const latitude = bcg.moderators.find((m) => m.name === "ablat")!.values;
  return parseStoredRun({
    specification: { name: "BCG", outcome: "recruitment", level: "within_year", term: "linear", scale: "per_day", test: "z" },
    selection: {
      link: "log",
      scale: "per_day",
      moderators: withModerator ? [{ key: "ablat", kind: "numeric", label: "Absolute latitude", unit: "degrees" }] : [],
      studies: bcg.y.map((y, i) => ({
        estimateId: i + 1,
        siteCode: `T${i + 1}`,
        species: i % 2 ? "Parus major" : "Cyanistes caeruleus",
        year: null,
        value: y,
        standardError: Math.sqrt(bcg.v[i]!),
        n: 100,
        source: "uploaded",
        submissionId: 1,
        moderators: { ablat: latitude[i]! },
      })),
      excluded: [],
      submissions: [{ id: 1, sha256: "0".repeat(64) }],
      notes: [],
    },
    fit: metaResultToJson(fit),
  });
}

describe("figures of an analysis run", () => {
  it("bubble plot band: R's REML meta-regression prediction at the mean latitude (mean and SE to 1e-6)", () => {
    const run = storedRun(true);
    const x = rModerated.predict_at[1]!;
    const band = fittedBand(run, "ablat", [x]);
    const r = rModerated.methods.reml;
    const z = normalQuantileStd(0.975);
    expectClose(band.fitted[0]!, r.prediction_mean, { rtol: 1e-6, label: "fitted mean (R)" });
    expectClose(band.upper[0]! - band.fitted[0]!, z * r.prediction_se, { rtol: 1e-6, label: "half-width z * SE (R)" });
    const [figure] = bubbleFigures(run);
    expect(figure!.input.points).toHaveLength(13);
    expect(figure!.input.fit!.moderator[0]).toBe(13);
    expect(figure!.input.fit!.moderator.at(-1)).toBe(55);
    expect(figure!.csv.split("\r\n")[0]).toBe("study,species,ablat,estimate,weight_percent");
  });

  it("forest plot: one row per study with Wald intervals, weights summing to 100, the pooled diamond and prediction bar", () => {
    const run = storedRun(false);
    const figure = forestFigure(run, { sort: "estimate" });
    expect(figure.input.rows).toHaveLength(13);
    const estimates = figure.input.rows.map((r) => r.estimate);
    expect(estimates).toEqual([...estimates].sort((a, b) => a - b));
    expectClose(figure.input.rows.reduce((s, r) => s + r.weightPercent, 0), 100, { rtol: 1e-12 });
    // Pooled REML estimate of the BCG trials, -0.7145 (published value, from memory, as in the pooling tests).
    expectClose(figure.input.pooled!.estimate, -0.7145, { atol: 5e-5 });
    expect(figure.input.prediction).not.toBeNull();
    const first = figure.input.rows[0]!;
    expectClose(first.ciUpper - first.estimate, first.estimate - first.ciLower, { rtol: 1e-12 });
    expect(figure.csv.split("\r\n")).toHaveLength(1 + 13 + 1);
  });

  it("a meta-regression has no single pooled value: no diamond, no funnel", () => {
    const run = storedRun(true);
    expect(forestFigure(run).input.pooled).toBeNull();
    expect(funnelFigure(run)).toBeNull();
    expect(funnelFigure(storedRun(false))!.input.points).toHaveLength(13);
  });

  it("residual funnel of a meta-regression: estimate minus R's REML fitted value at the study's latitude (1e-6)", () => {
    const run = storedRun(true);
    const figure = residualFunnelFigure(run)!;
    const [b0, b1] = rModerated.methods.reml.beta;
    const latitude = bcg.moderators.find((m) => m.name === "ablat")!.values;
    figure.input.points.forEach((p, i) => expectClose(p.estimate, bcg.y[i]! - (b0! + b1! * latitude[i]!), { rtol: 1e-6, atol: 1e-8, label: `residual ${i + 1} (R)` }));
    expect(figure.input.pooledEstimate).toBe(0);
    expect(residualFunnelFigure(storedRun(false))).toBeNull();
  });

  it("refuses a stored run of the wrong shape, naming the path", () => {
    expect(() => parseStoredRun({ specification: {}, selection: {}, fit: {} })).toThrow(/unexpected shape: specification.name/);
  });
});
