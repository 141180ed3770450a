/**
 * `pool --level COL ... --cluster COL` on the command line: multilevel models and CR2 inference,
 * checked against the base-R references of test/fixtures/r-stats/make-multilevel-fixtures.R
 * (R 4.2.2: dense-matrix REML with optim and uniroot; lm + written-out CR2 sandwich), through CSV
 * files written from the fixture's datasets.
 */
import { afterAll, describe, expect, it } from "vitest";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { runCli } from "@/lib/cli/run-cli";
import { expectClose } from "@/test/helpers/expect-close";
import { multilevelDataset, multilevelReference, singleLevelCr2Reference } from "@/test/stats/meta/multilevel-datasets";

const folder = mkdtempSync(join(tmpdir(), "pool-multilevel-cli-"));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

/** The dataset as CSV: its level columns, site/species columns, moderators, y and v (17 significant digits). */
function datasetCsv(name: string): string {
  const d = multilevelDataset(name);
  const columns: [string, readonly (string | number)[]][] = [
    ...d.levels.map((level): [string, readonly string[]] => [level.name, level.values]),
    ...(d.site && !d.levels.some((l) => l.name === "site") ? ([["site", d.site]] as [string, readonly string[]][]) : []),
    ...d.specs.map((spec): [string, readonly (string | number)[]] => [spec.name, Array.from(spec.values as ArrayLike<string | number>)]),
    ["y", Array.from(d.data.estimates)],
    ["v", Array.from(d.data.variances)],
  ];
  const lines = [columns.map(([header]) => header).join(",")];
  for (let i = 0; i < d.data.k; i += 1) lines.push(columns.map(([, values]) => String(values[i])).join(","));
  const path = join(folder, `${name}.csv`);
  writeFileSync(path, `${lines.join("\n")}\n`);
  return path;
}

async function run(...args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  let stdout = "";
  let stderr = "";
  const code = await runCli(["pool", ...args], { stdout: (t) => (stdout += t), stderr: (t) => (stderr += t) });
  return { code, stdout, stderr };
}
async function json(...args: string[]) {
  const result = await run(...args, "--format", "json");
  expect(result.stderr).toBe("");
  expect(result.code).toBe(0);
  return JSON.parse(result.stdout);
}

const three = datasetCsv("three_level");
const clustered = datasetCsv("clustered");
const withinBetween = datasetCsv("within_between");
const base = ["--estimate", "y", "--variance", "v"];

describe("pool --level (multilevel models)", () => {
  it("three levels, REML: variance_components [{level, sigma2, ci_lower, ci_upper, i2}] as R computes them", async () => {
    const ref = multilevelReference("three_level", "reml");
    const out = await json(three, ...base, "--level", "species", "--level", "site", "--level", "site_year");
    expect(out.variance_components.map((c: { level: string }) => c.level)).toEqual(["species", "site", "site_year"]);
    out.variance_components.forEach((c: { level: string; sigma2: number; ci_lower: number; ci_upper: number; i2: number }, l: number) => {
      expectClose(c.sigma2, ref.sigma2[l]!, { rtol: 1e-7, label: `${c.level} sigma2 (R optim)` });
      if (ref.profile_ci[l]![0] === 0) expect(c.ci_lower).toBe(0);
      else expectClose(c.ci_lower, ref.profile_ci[l]![0], { rtol: 1e-8, label: `${c.level} ci_lower (R uniroot)` });
      expectClose(c.ci_upper, ref.profile_ci[l]![1], { rtol: 1e-8, label: `${c.level} ci_upper (R uniroot)` });
      expectClose(c.i2, ref.i2[l]!, { rtol: 1e-6, label: `${c.level} i2 (R)` });
    });
    expectClose(out.coefficients[0].estimate, ref.beta[0]!, { rtol: 1e-7, label: "pooled mean (R GLS)" });
    expectClose(out.fit.log_likelihood, ref.log_likelihood, { rtol: 1e-10, label: "restricted log-likelihood (R)" });
    for (const field of ["model", "coefficients", "heterogeneity", "prediction_interval", "fit", "warnings"]) expect(out).toHaveProperty(field);
  });

  it("ML with moderators, and the confidence level by --confidence", async () => {
    const ref = multilevelReference("three_level", "ml_moderated");
    const out = await json(three, ...base, "--level", "species", "--level", "site", "--level", "site_year", "--moderator", "warmth", "--moderator", "habitat", "--reference", "habitat=oak", "--method", "ml");
    expect(out.coefficients.map((c: { term: string }) => c.term)).toEqual(ref.columns);
    out.coefficients.forEach((c: { se: number }, j: number) => expectClose(c.se, ref.se[j]!, { rtol: 1e-7, label: `${ref.columns[j]} SE (R)` }));
    expect(out.multilevel.bic_n).toBe(72);
    const narrow = await json(three, ...base, "--level", "species", "--level", "site", "--level", "site_year", "--confidence", "0.9");
    expect(narrow.model.confidence_level).toBe(0.9);
    const remlAt95 = multilevelReference("three_level", "reml").profile_ci[0]!;
    expect(narrow.variance_components[0].ci_upper).toBeLessThan(remlAt95[1]);
    expect(narrow.variance_components[0].ci_lower).toBeGreaterThan(remlAt95[0]);
  });

  it("the table shows the variance components, the tests and how the p-value was obtained", async () => {
    const { code, stdout } = await run(three, ...base, "--level", "species", "--level", "site", "--level", "site_year");
    expect(code).toBe(0);
    expect(stdout).toMatch(/^Multilevel random-effects model \(species \/ site \/ site_year\), variances by restricted maximum likelihood/);
    expect(stdout).toMatch(/Variance components \(between estimates; 95% profile-likelihood intervals\)/);
    expect(stdout).toMatch(/^\s+site_year\s+36\s/m);
    expect(stdout).toMatch(/50:50 mixture of chi2_0 and chi2_1/);
    expect(stdout).toMatch(/AIC -?\d/);
  });
});

describe("pool --cluster (CR2)", () => {
  it("single-level REML with a moderator: robust SEs and df as R's lm + sandwich", async () => {
    const ref = singleLevelCr2Reference("clustered", "cr2_reml");
    const out = await json(clustered, ...base, "--moderator", "x", "--cluster", "site");
    expect(out.variance_components).toBeNull();
    expect(out.robust).toMatchObject({ method: "CR2", cluster: "site", clusters: 8 });
    out.robust.coefficients.forEach((c: { se: number; df: number }, j: number) => {
      expectClose(c.se, ref.se[j]!, { rtol: 1e-8, label: `${ref.columns[j]} CR2 SE (R)` });
      expectClose(c.df, ref.df[j]!, { rtol: 1e-8, label: `${ref.columns[j]} Satterthwaite df (R)` });
    });
    const { stdout } = await run(clustered, ...base, "--moderator", "x", "--cluster", "site");
    expect(stdout).toMatch(/Cluster-robust \(CR2\) inference: 8 clusters by 'site' \(1-5 estimates each\)/);
  });

  it("the within- versus between-year recipe from the usage text, against R", async () => {
    const ref = multilevelReference("within_between", "reml");
    const out = await json(withinBetween, ...base, "--moderator", "estimate_level", "--reference", "estimate_level=within", "--level", "site", "--level", "estimate", "--cluster", "site");
    expect(out.coefficients.map((c: { term: string }) => c.term)).toEqual(["intercept", "estimate_level[between]"]);
    expectClose(out.coefficients[1].estimate, ref.beta[1]!, { rtol: 1e-7, label: "between - within (R)" });
    expectClose(out.robust.coefficients[1].se, ref.cr2!.se[1]!, { rtol: 1e-7, label: "CR2 SE (R)" });
    expectClose(out.robust.coefficients[1].df, ref.cr2!.df[1]!, { rtol: 1e-7, label: "CR2 df (R)" });
    // The simulated truth (+0.20, between-year effects weaker) lies inside the robust interval, above 0.
    expect(out.robust.coefficients[1].ci_lower).toBeGreaterThan(0);
    expect(out.robust.coefficients[1].ci_upper).toBeGreaterThan(0.2);
  });
});

describe("pool --level and --cluster refuse what they cannot do, saying why", () => {
  it("bad combinations and columns exit non-zero with the reason on stderr", async () => {
    const levels = ["--level", "species", "--level", "site"];
    const cases: [string[], RegExp][] = [
      [[three, ...base, "--level", "0.9"], /--level names a grouping column of a multilevel model; give the confidence level as --confidence 0.9/],
      [[three, ...base, ...levels, "--method", "dl"], /fitted by --method reml or ml, not 'dl'/],
      [[three, ...base, ...levels, "--test", "hksj"], /--test hksj applies to single-level models/],
      [[three, ...base, ...levels, "--moderator", "warmth", "--permutations", "50"], /--permutations applies to single-level models/],
      [[three, ...base, "--level", "species", "--level", "species"], /--level 'species' is given twice/],
      [[three, ...base, "--level", "nope"], /no column 'nope'/],
      [[three, ...base, "--confidence", "2"], /--confidence must be a number between 0 and 1/],
      [[three, ...base, "--level", "species", "--level", "site", "--cluster", "site"], /the random effects at level 'species' span clusters/],
      [[three, ...base, "--cluster", "species", "--cluster", "site"], /--cluster is given more than once/],
    ];
    for (const [args, message] of cases) {
      const result = await run(...args);
      expect(result.code, args.join(" ")).not.toBe(0);
      expect(result.stdout).toBe("");
      expect(result.stderr).toMatch(message);
    }
  });

  it("help pool documents --level, --cluster and the within/between recipe", async () => {
    let stdout = "";
    await runCli(["help", "pool"], { stdout: (t) => (stdout += t), stderr: () => undefined });
    expect(stdout).toMatch(/--level COL\s+a grouping level for nested random intercepts/);
    expect(stdout).toMatch(/--cluster COL\s+cluster-robust \(CR2\)/);
    expect(stdout).toMatch(/--confidence L/);
    expect(stdout).toMatch(/--level site --level estimate_id --cluster site/);
  });
});
