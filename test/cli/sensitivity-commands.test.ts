/**
 * The sensitivity and small-study commands on the command line: influence, leave-out, cumulative,
 * subgroups and bias. Numbers are checked against base R (test/fixtures/r-stats/
 * make-sensitivity-fixtures.R, R 4.2.2) on the BCG vaccine trials (Colditz et al. 1994) with an
 * invented three-zone grouping.
 */
import { afterAll, describe, expect, it } from "vitest";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { runCli } from "@/lib/cli/run-cli";
import { expectClose } from "@/test/helpers/expect-close";
import { reference } from "@/test/stats/meta/sensitivity-fixture";

const folder = mkdtempSync(join(tmpdir(), "sensitivity-cli-"));
afterAll(() => rmSync(folder, { recursive: true, force: true }));
function csv(name: string, text: string): string {
  const path = join(folder, name);
  writeFileSync(path, text);
  return path;
}
const { y, v, ablat, zone } = reference.data.bcg;
const bcg = csv("bcg.csv", ["trial,log_rr,var,se,latitude,zone", ...y.map((yi, i) => `T${i + 1},${yi},${v[i]},${Math.sqrt(v[i]!)},${ablat[i]},${zone[i]}`)].join("\n") + "\n");
const base = [bcg, "--estimate", "log_rr", "--variance", "var"];

async function run(...args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  let stdout = "";
  let stderr = "";
  const code = await runCli(args, { stdout: (t) => (stdout += t), stderr: (t) => (stderr += t) });
  return { code, stdout, stderr };
}
async function json(...args: string[]) {
  const result = await run(...args, "--format", "json");
  expect(result.stderr).toBe("");
  expect(result.code).toBe(0);
  return JSON.parse(result.stdout);
}

describe("influence", () => {
  it("table and JSON with R's diagnostics (REML)", async () => {
    const { code, stdout } = await run("influence", ...base, "--label", "trial");
    expect(code).toBe(0);
    expect(stdout).toMatch(/Influence diagnostics/);
    expect(stdout).toMatch(/^T8\s+10\.2%/m);
    expect(stdout).toMatch(/Rules \(k = 13, p = 1; rules of thumb, common practice\)/);
    expect(stdout).toMatch(/Baujat coordinates \(common-effect fits; Q = 152\.2\)/);
    const out = await json("influence", ...base, "--label", "trial");
    expect(out.analysis).toBe("influence");
    const expected = reference.influence.bcg_reml.studies;
    out.studies.forEach((s: { label: string; cooks_distance: number; studentized_deleted_residual: number; dfbetas: { intercept: number } }, i: number) => {
      expect(s.label).toBe(`T${i + 1}`);
      expectClose(s.cooks_distance, expected[i]!.cooks_distance, { rtol: 1e-7, label: `T${i + 1} Cook (R)` });
      expectClose(s.studentized_deleted_residual, expected[i]!.rstudent, { rtol: 1e-7, label: `T${i + 1} rstudent (R)` });
      expectClose(s.dfbetas.intercept, expected[i]!.dfbetas[0]!, { rtol: 1e-7, label: `T${i + 1} DFBETAS (R)` });
    });
    expect(out.rules.map((r: { status: string }) => r.status)).toEqual(Array(5).fill("common practice"));
    const moderated = await json("influence", ...base, "--moderator", "latitude", "--method", "reml");
    expectClose(moderated.studies[3].covariance_ratio, reference.influence.bcg_reml_ablat.studies[3]!.covariance_ratio, { rtol: 1e-7, label: "COVRATIO with latitude (R)" });
  });

  it("has no --test option: the diagnostics are model-based", async () => {
    const result = await run("influence", ...base, "--test", "hksj");
    expect(result.code).toBe(2);
    expect(result.stderr).toMatch(/unknown option --test/);
  });
});

describe("leave-out", () => {
  it("by estimate and --by zone, with R's values", async () => {
    const out = await json("leave-out", ...base);
    expect(out.by).toBe("estimate");
    out.omissions.forEach((o: { coefficients: { estimate: number }[]; tau2: number }, i: number) => {
      expectClose(o.coefficients[0]!.estimate, reference.leave_one_out.bcg_reml[i]!.estimate, { rtol: 1e-7, label: `without T${i + 1} (R)` });
      expectClose(o.tau2, reference.leave_one_out.bcg_reml[i]!.tau2, { rtol: 1e-7, label: `tau2 without T${i + 1} (R)` });
    });
    const byZone = await json("leave-out", ...base, "--by", "zone");
    expect(byZone.omissions.map((o: { omitted: string }) => o.omitted)).toEqual(["mid", "north", "south"]);
    expectClose(byZone.omissions[1].i2, reference.leave_zone_out[1]!.i2, { rtol: 1e-7, label: "I2 without the north zone (R)" });
    const { stdout } = await run("leave-out", ...base, "--by", "zone");
    expect(stdout).toMatch(/^north\s+7\s+-0\.2647/m);
  });
});

describe("cumulative", () => {
  it("--order latitude with DL: R's steps; the first row is not computed until two estimates are in", async () => {
    const out = await json("cumulative", ...base, "--order", "latitude", "--method", "dl");
    const expected = reference.cumulative_dl_by_latitude;
    expect(out.steps.map((s: { value: number }) => s.value)).toEqual(expected.map((e) => e.value));
    out.steps.forEach((s: { coefficients: { estimate: number }[] }, i: number) => expectClose(s.coefficients[0]!.estimate, expected[i]!.estimate!, { rtol: 1e-9, label: `step ${i + 1} (R)` }));
    const one = await json("cumulative", ...base, "--order", "trial");
    expect(one.order.kind).toBe("text");
    expect(one.steps[0]).toMatchObject({ available: false, studies: 1 });
    const { stdout } = await run("cumulative", ...base, "--order", "latitude", "--descending");
    expect(stdout).toMatch(/ordered by 'latitude' \(largest first\)/);
    expect(stdout).toMatch(/^55\s+1\s+1\s.*not computed: one study pools nothing/m);
  });
});

describe("subgroups", () => {
  it("--by zone, separate and common tau^2, with R's tests", async () => {
    const separate = await json("subgroups", ...base, "--by", "zone");
    expectClose(separate.test.statistic, reference.subgroups_by_zone.separate_reml.q_between, { rtol: 1e-7, label: "Q_between (R)" });
    const common = await json("subgroups", ...base, "--by", "zone", "--tau2", "common");
    expectClose(common.test.statistic, reference.subgroups_by_zone.common_reml.q_m, { rtol: 1e-7, label: "Q_M (R)" });
    expectClose(common.common_tau2, reference.subgroups_by_zone.common_reml.tau2, { rtol: 1e-7, label: "common tau2 (R)" });
    const { stdout } = await run("subgroups", ...base, "--by", "zone");
    expect(stdout).toMatch(/Test of subgroup differences: chi-square = 14\.54 on 2 df, p < 0\.001/);
  });

  it("refuses a subgroup of one estimate with separate tau^2, and --moderator", async () => {
    const lone = csv("lone.csv", ["y,v,species", "0.1,0.02,tit", "0.3,0.03,tit", "0.2,0.01,tit", "0.5,0.02,flycatcher"].join("\n") + "\n");
    let result = await run("subgroups", lone, "--estimate", "y", "--variance", "v", "--by", "species");
    expect(result.code).toBe(2);
    expect(result.stderr).toMatch(/'flycatcher' have a single estimate/);
    result = await run("subgroups", lone, "--estimate", "y", "--variance", "v", "--by", "species", "--tau2", "common");
    expect(result.code).toBe(0);
    expect(result.stdout).toMatch(/Warnings[\s\S]*'flycatcher' have a single estimate/);
    result = await run("subgroups", ...base, "--by", "zone", "--moderator", "latitude");
    expect(result.stderr).toMatch(/unknown option --moderator/);
    result = await run("subgroups", ...base);
    expect(result.stderr).toMatch(/--by COL is required/);
    result = await run("subgroups", ...base, "--by", "zone", "--tau2", "pooled");
    expect(result.stderr).toMatch(/--tau2 must be separate or common/);
  });
});

describe("bias", () => {
  it("table and JSON: funnel data, Egger (R lm), rank test (R cor.test), trim-and-fill with the sensitivity note", async () => {
    const { code, stdout } = await run("bias", ...base, "--label", "trial");
    expect(code).toBe(0);
    expect(stdout).toMatch(/sensitivity analyses, not corrections/);
    expect(stdout).toMatch(/filled \(mirror of T7\)/);
    const out = await json("bias", ...base);
    expectClose(out.egger.intercept.p_value, reference.egger.bcg.intercept.p_value, { rtol: 1e-8, label: "Egger p (R lm)" });
    expectClose(out.rank_correlation.p_value, reference.rank_correlation.bcg.p_normal, { rtol: 1e-10, label: "rank test p (R cor.test exact = FALSE)" });
    expectClose(out.rank_correlation.exact_p_value, reference.rank_correlation.bcg.p_exact, { rtol: 1e-10, label: "exact p (R cor.test exact = TRUE)" });
    const expected = reference.trim_and_fill.bcg_reml_l0!;
    expect(out.trim_and_fill).toMatchObject({ available: true, estimator: "l0", side: expected.side, k0: expected.k0, side_chosen_by: "data" });
    expectClose(out.trim_and_fill.adjusted.coefficients[0].estimate, expected.adjusted_estimate, { rtol: 1e-7, label: "adjusted estimate (R)" });
    expect(out.funnel.filled).toHaveLength(expected.k0);
    expect(out.funnel.contours.map((c: { p: number }) => c.p)).toEqual([0.1, 0.05, 0.01]);
    expect(out.notes.join(" ")).toMatch(/not a correction/);
    const r0 = await json("bias", ...base, "--method", "dl", "--estimator", "r0", "--side", "right");
    expect(r0.trim_and_fill).toMatchObject({ estimator: "r0", side_chosen_by: "given", k0: reference.trim_and_fill.bcg_dl_r0!.k0 });
  });

  it("bad options exit non-zero with the reason", async () => {
    const cases: [string[], RegExp][] = [
      [["bias", ...base, "--estimator", "q0"], /--estimator must be l0 or r0/],
      [["bias", ...base, "--side", "up"], /--side must be left or right/],
      [["bias", ...base, "--moderator", "latitude"], /unknown option --moderator/],
      [["bias", bcg, "--estimate", "log_rr"], /give exactly one of --se COL and --variance COL/],
      [["cumulative", ...base], /--order COL is required/],
      [["cumulative", ...base, "--order", "latitude", "--descending=yes"], /--descending takes no value/],
      [["cumulative", ...base, "--order", "nope"], /no column 'nope'/],
      [["leave-out", ...base, "--by", "nope"], /no column 'nope'/],
      [["leave-out", ...base, "--method", "bayes"], /--method must be one of/],
      [["influence", ...base, "--confidence", "2"], /--confidence must be a number between 0 and 1/],
      [["influence", ...base, "--level", "0.9"], /unknown option --level/],
    ];
    for (const [args, message] of cases) {
      const result = await run(...args);
      expect(result.code, args.join(" ")).not.toBe(0);
      expect(result.stdout).toBe("");
      expect(result.stderr).toMatch(message);
    }
    const two = csv("two.csv", "y,se\n0.1,0.2\n0.3,0.1\n");
    const result = await run("bias", two, "--estimate", "y", "--se", "se");
    expect(result.code).toBe(2);
    expect(result.stderr).toMatch(/two\.csv: the small-study analyses need at least 3 studies/);
    const bad = csv("bad.csv", "y,se,site\n0.1,0.2,A\n0.3,-1,B\n0.2,0.1,C\n");
    const badRow = await run("leave-out", bad, "--estimate", "y", "--se", "se");
    expect(badRow.stderr).toMatch(/row 2, se: study 2: the standard error is -1/);
  });

  it("every command is listed in help with its usage", async () => {
    const { stdout } = await run("help");
    for (const name of ["influence", "leave-out", "cumulative", "subgroups", "bias"]) expect(stdout).toMatch(new RegExp(`^  ${name}\\s`, "m"));
    const usage = await run("help", "bias");
    expect(usage.stdout).toMatch(/--estimator E/);
  });
});
