/**
 * Multilevel and cluster-robust analyses from the builder's specification. Reference:
 * test/fixtures/r-stats/multilevel-reference.json (make-multilevel-fixtures.R, base R written out
 * from the likelihoods): `within_between` (30 sites x 2 estimates, REML with site and estimate
 * levels), `boundary` (site variance at 0) and `clustered` (single-level REML meta-regression with
 * CR2 standard errors and Satterthwaite df by site).
 */
import { describe, expect, it } from "vitest";
import referenceJson from "@/test/fixtures/r-stats/multilevel-reference.json";
import { fitAnalysis } from "@/lib/analyses/fit-analysis";
import type { AnalysisDataset } from "@/lib/analyses/analysis-dataset";
import { analysisSpecificationSchema } from "@/lib/analyses/specification";
import { parseStoredRun } from "@/lib/analyses/stored-run";
import { runSensitivity, runTrimAndFill, speciesSubgroups } from "@/lib/analyses/run-sensitivity";
import { reportContent } from "@/lib/analyses/report-content";
import { metaResultToJson } from "@/lib/stats/meta/result-json";
import { expectClose } from "@/test/helpers/expect-close";

interface Dataset { y: number[]; v: number[]; levels: Record<string, string[]>; site?: string[]; moderators: { name: string; values: (number | string)[] }[] }
const json = referenceJson as unknown as { datasets: Record<string, Dataset>; reference: Record<string, Record<string, { sigma2?: number[]; beta: number[]; se: number[]; df?: number[] }>> };

function dataset(name: string, moderator?: { key: string; values: number[] }): AnalysisDataset {
  const d = json.datasets[name]!;
  const sites = d.levels.site ?? d.site!;
  return {
    studies: d.y.map((value, i) => ({
      estimateId: i + 1, siteCode: sites[i]!, species: "Parus major", year: 2000 + i, value, standardError: Math.sqrt(d.v[i]!), n: 50,
      source: "uploaded", method: "fixture", submissionId: 1, moderators: moderator ? { [moderator.key]: moderator.values[i]! } : {},
    })),
    excluded: [],
    moderators: moderator ? [{ key: moderator.key, kind: "numeric", label: moderator.key, unit: null }] : [],
    link: "identity",
    scale: "per_day",
    submissions: [{ id: 1, sha256: "0".repeat(64) }],
    moderatorValues: [],
    notes: [],
  };
}

const spec = (extra: Record<string, unknown>) =>
  analysisSpecificationSchema.parse({ name: "t", outcome: "recruitment", level: "within_year", term: "linear", grain: "site_year", model: { type: "random_effects", tau2Estimator: "reml" }, test: "z", ...extra });

describe("multilevel analyses (R reference)", () => {
  it("site and estimate levels: R's REML variance components, coefficients and SEs (within_between, 1e-5)", () => {
    const d = json.datasets.within_between!;
    const between = d.moderators[0]!.values.map((v) => (v === "between" ? 1 : 0));
    const fit = fitAnalysis(spec({ levels: ["site", "estimate"], moderators: ["between"] }), dataset("within_between", { key: "between", values: between }));
    const r = json.reference.within_between!.reml!;
    expect(fit.multilevel!.components.map((c) => c.level)).toEqual(["site", "estimate"]);
    fit.multilevel!.components.forEach((c, i) => expectClose(c.sigma2, r.sigma2![i]!, { rtol: 1e-5, label: `sigma2 ${c.level} (R)` }));
    fit.coefficients.forEach((c, j) => {
      expectClose(c.estimate, r.beta[j]!, { rtol: 1e-5, label: `${c.term} (R)` });
      expectClose(c.standardError, r.se[j]!, { rtol: 1e-5, label: `SE ${c.term} (R)` });
    });
  });

  it("a site variance at its boundary (0) as R finds it, and the run stores and reads back", () => {
    const s = spec({ levels: ["site", "estimate"] });
    const data = dataset("boundary");
    const fit = fitAnalysis(s, data);
    const r = json.reference.boundary!.reml!;
    expect(fit.multilevel!.components[0]!.sigma2).toBeLessThan(1e-8);
    expectClose(fit.multilevel!.components[1]!.sigma2, r.sigma2![1]!, { rtol: 1e-5, label: "sigma2 estimate (R)" });
    expectClose(fit.coefficients[0]!.estimate, r.beta[0]!, { rtol: 1e-5, label: "pooled (R)" });
    const run = parseStoredRun({ specification: s, selection: { ...data, studies: data.studies }, fit: metaResultToJson(fit) });
    expect(run.fit.variance_components!.map((c) => c.level)).toEqual(["site", "estimate"]);
    // The sensitivity analyses would refit another model: refused, with the reason.
    const refused = runSensitivity(run);
    expect(refused.leaveOut).toEqual({ available: false, reason: "the sensitivity analyses refit a single-level model, and this run is a multilevel model" });
    expect(runTrimAndFill(run).available).toBe(false);
    expect(speciesSubgroups(run).available).toBe(false);
    // The report's methods describe the model that was fitted, not a single-level one.
    const report = reportContent(run, { engineVersion: "test", runId: 1, createdAt: new Date(0) });
    expect(report.methods).toContain("multilevel model with nested random effects of site, estimate");
    expect(report.methods).not.toContain("Q-profile");
  });

  it("cluster-robust (CR2) standard errors by site: R's SEs and Satterthwaite df (clustered, 1e-6)", () => {
    const d = json.datasets.clustered!;
    const x = d.moderators[0]!.values as number[];
    const fit = fitAnalysis(spec({ moderators: ["x"], robustCluster: "site" }), dataset("clustered", { key: "x", values: x }));
    const r = json.reference.clustered!.cr2_reml!;
    expect(fit.robust!.clusterCount).toBe(8);
    fit.robust!.coefficients.forEach((c, j) => {
      expectClose(c.standardError, r.se[j]!, { rtol: 1e-6, label: `CR2 SE ${c.term} (R)` });
      expectClose(c.df, r.df![j]!, { rtol: 1e-6, label: `Satterthwaite df ${c.term} (R)` });
    });
  });

  it("refuses combinations the engine cannot fit, each with the reason", () => {
    const refuse = (extra: Record<string, unknown>) => {
      const parsed = analysisSpecificationSchema.safeParse({ name: "t", outcome: "recruitment", level: "within_year", term: "linear", grain: "site_year", moderators: ["x"], ...extra });
      return parsed.success ? null : parsed.error.issues.map((i) => i.message);
    };
    expect(refuse({ levels: ["estimate", "site"], test: "z" })).toEqual(["list each level once, outermost first: species, site, estimate"]);
    expect(refuse({ levels: ["site"], model: { type: "random_effects", tau2Estimator: "dl" }, test: "z" })).toEqual(["a multilevel model is a random-effects model fitted by REML or ML"]);
    expect(refuse({ levels: ["site"], test: "hksj" })).toEqual(["a multilevel model uses Wald z tests; for small-sample tests choose cluster-robust standard errors"]);
    expect(refuse({ levels: ["species", "site"], test: "z", robustCluster: "site" })).toEqual(["clusters by site would split the outermost level (species); cluster by species"]);
    expect(refuse({ robustCluster: "site", permutationTest: { permutations: 1000 } })).toEqual(["choose either the permutation test or cluster-robust standard errors"]);
    expect(refuse({ levels: ["site", "estimate"], test: "z" })).toBeNull();
  });
});
