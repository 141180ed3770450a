/**
 * `pool` on the command line. Numbers are checked against the published BCG vaccine trial
 * results (Colditz et al. 1994; values quoted from memory in issue 3) to their quoted digits; the
 * categorical column is an invented grouping that only exercises the coding.
 */
import { afterAll, describe, expect, it } from "vitest";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { runCli } from "@/lib/cli/run-cli";
import { expectClose } from "@/test/helpers/expect-close";

const trials = [
  [4, 119, 11, 128, 44], [6, 300, 29, 274, 55], [3, 228, 11, 209, 42], [62, 13536, 248, 12619, 52], [33, 5036, 47, 5761, 13],
  [180, 1361, 372, 1079, 44], [8, 2537, 10, 619, 19], [505, 87886, 499, 87892, 13], [29, 7470, 45, 7232, 27], [17, 1699, 65, 1600, 42],
  [186, 50448, 141, 27197, 18], [5, 2493, 3, 2338, 33], [27, 16886, 29, 17825, 33],
] as const;
const groups = ["north", "north", "north", "north", "south", "north", "south", "south", "mid", "north", "south", "mid", "mid"];

const folder = mkdtempSync(join(tmpdir(), "pool-cli-"));
afterAll(() => rmSync(folder, { recursive: true, force: true }));
function csv(name: string, text: string): string {
  const path = join(folder, name);
  writeFileSync(path, text);
  return path;
}
const rows = trials.map(([tpos, tneg, cpos, cneg, lat], i) => {
  const y = Math.log(tpos / (tpos + tneg) / (cpos / (cpos + cneg)));
  const v = 1 / tpos - 1 / (tpos + tneg) + 1 / cpos - 1 / (cpos + cneg);
  return `T${i + 1},${y},${v},${Math.sqrt(v)},${lat},${groups[i]}`;
});
const bcg = csv("bcg.csv", ["trial,log_rr,var,se,latitude,zone", ...rows].join("\n") + "\n");

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

describe("pool command", () => {
  it("prints a table for people by default (REML, z)", async () => {
    const { code, stdout } = await run(bcg, "--estimate", "log_rr", "--variance", "var");
    expect(code).toBe(0);
    expect(stdout).toMatch(/Random-effects model, tau\^2 by restricted maximum likelihood/);
    expect(stdout).toMatch(/intercept\s+-0\.71453/);
    expect(stdout).toMatch(/tau\^2\s+0\.31324/);
    expect(stdout).toMatch(/Q\s+152\.23 on 12 df/);
    expect(stdout).toMatch(/Prediction interval for a new study \(t, 11 df\)/);
  });

  it("--format json: the issue's fields, with the published BCG values (REML and DL)", async () => {
    const reml = await json(bcg, "--estimate", "log_rr", "--se", "se");
    expect(reml.model).toMatchObject({ method: "reml", test: "z", k: 13, p: 1 });
    expectClose(reml.coefficients[0].estimate, -0.7145, { atol: 5e-5, label: "REML pooled (published)" });
    expectClose(reml.heterogeneity.tau2, 0.3132, { atol: 5e-5, label: "REML tau2 (published)" });
    expectClose(reml.heterogeneity.q, 152.23, { atol: 5e-3, label: "Q (published)" });
    expect(reml.heterogeneity.q_df).toBe(12);
    expect(reml.heterogeneity.tau2_ci).toHaveLength(2);
    expect(reml.prediction_interval).toHaveLength(2);
    expect(reml.fit.converged).toBe(true);
    for (const field of ["moderators_test", "residual_heterogeneity", "r2"]) expect(reml[field]).toBeNull();
    const dl = await json(bcg, "--estimate", "log_rr", "--variance", "var", "--method", "dl");
    expectClose(dl.heterogeneity.tau2, 0.3088, { atol: 5e-5, label: "DL tau2 (published)" });
    expectClose(dl.coefficients[0].se, 0.1787, { atol: 5e-5, label: "DL SE (published)" });
    expectClose(dl.heterogeneity.i2, 92.12, { atol: 5e-3, label: "I2 percent (published)" });
    const fe = await json(bcg, "--estimate", "log_rr", "--variance", "var", "--method", "fe");
    expectClose(fe.coefficients[0].estimate, -0.4303, { atol: 5e-5, label: "common effect (published)" });
    expect(fe.prediction_interval).toBeNull();
  });

  it("meta-regression on latitude (published: tau2 0.0763, slope -0.0291), HKSJ, categorical moderators", async () => {
    const regression = await json(bcg, "--estimate", "log_rr", "--variance", "var", "--moderator", "latitude");
    expect(regression.coefficients.map((c: { term: string }) => c.term)).toEqual(["intercept", "latitude"]);
    expectClose(regression.coefficients[1].estimate, -0.0291, { atol: 5e-5, label: "slope (published)" });
    expectClose(regression.heterogeneity.tau2, 0.0763, { atol: 5e-5, label: "residual tau2 (published)" });
    expect(regression.moderators_test.df).toBe(1);
    expect(regression.residual_heterogeneity.df).toBe(11);
    expect(regression.r2).toBeGreaterThan(0);
    expect(regression.prediction_interval).toBeNull();

    const both = await json(bcg, "--estimate", "log_rr", "--variance", "var", "--moderator", "latitude", "--moderator", "zone", "--reference", "zone=south", "--test", "hksj", "--predict-at", "latitude=30", "--predict-at", "zone=mid");
    expect(both.coefficients.map((c: { term: string }) => c.term)).toEqual(["intercept", "latitude", "zone[mid]", "zone[north]"]);
    expect(both.model.test_df).toBe(9);
    expect(both.moderators_test).toMatchObject({ distribution: "F", df: 3, df2: 9 });
    expect(both.prediction.at).toEqual([1, 30, 1, 0]);
    expect(both.prediction_interval).toHaveLength(2);
  });

  it("--permutations with --seed: reproducible, and reported", async () => {
    const args = [bcg, "--estimate", "log_rr", "--variance", "var", "--moderator", "latitude", "--permutations", "200", "--seed", "5"];
    const first = await json(...args);
    const second = await json(...args);
    expect(first.permutation_test).toMatchObject({ permutations: 200, exact: false, seed: 5 });
    expect(first.permutation_test).toEqual(second.permutation_test);
    expect(Object.keys(first.permutation_test.coefficient_p_values)).toEqual(["latitude"]);
  });

  it("bad input exits non-zero with the reason on stderr", async () => {
    const cases: [string[], RegExp][] = [
      [[bcg, "--estimate", "log_rr"], /give exactly one of --se COL and --variance COL/],
      [[bcg, "--estimate", "log_rr", "--se", "se", "--variance", "var"], /give exactly one of --se COL and --variance COL/],
      [[bcg, "--estimate", "nope", "--se", "se"], /no column 'nope'/],
      [[bcg, "--estimate", "log_rr", "--se", "se", "--method", "bayes"], /--method must be one of fe, dl, reml, ml, pm, he, sj/],
      [[bcg, "--estimate", "log_rr", "--se", "se", "--moderator", "latitude", "--centre", "zone"], /--centre names 'zone', which is not a --moderator/],
      [[join(folder, "absent.csv"), "--estimate", "a", "--se", "b"], /no such file/],
      [[bcg, "--estimate", "log_rr", "--se", "se", "--seed", "3"], /--seed only applies with --permutations/],
      [[bcg, "--estimate", "log_rr", "--se", "se", "--permutations", "50"], /needs at least one moderator/],
      [[bcg, "--estimate", "log_rr", "--se", "se", "--frobnicate", "1"], /unknown option --frobnicate/],
    ];
    for (const [args, message] of cases) {
      const result = await run(...args);
      expect(result.code, args.join(" ")).not.toBe(0);
      expect(result.stdout).toBe("");
      expect(result.stderr).toMatch(message);
    }
  });

  it("names the file, row and column of bad cells, and explains what cannot be fitted", async () => {
    const badCell = csv("bad-cell.csv", "site,y,se\nA,0.1,0.2\nB,oops,0.3\nC,0.2,0.1\n");
    let result = await run(badCell, "--estimate", "y", "--se", "se");
    expect(result.code).toBe(2);
    expect(result.stderr).toMatch(/bad-cell\.csv.*column 'y' needs a number in every row/);
    expect(result.stderr).toMatch(/row 2, y: 'oops' is not a number/);

    const negative = csv("negative.csv", "site,y,v\nA,0.1,0.2\nB,0.3,-0.3\nC,0.2,0.1\n");
    result = await run(negative, "--estimate", "y", "--variance", "v");
    expect(result.code).toBe(2);
    expect(result.stderr).toMatch(/row 2, v: study 2: the sampling variance is -0.3/);

    const ragged = csv("ragged.csv", "site,y,v\nA,0.1,0.2\nB,0.3\n");
    result = await run(ragged, "--estimate", "y", "--variance", "v");
    expect(result.stderr).toMatch(/row 2, row: has 2 cells; the heading row has 3/);

    const single = csv("single.csv", "site,y,v\nA,0.1,0.2\n");
    result = await run(single, "--estimate", "y", "--variance", "v");
    expect(result.code).toBe(2);
    expect(result.stderr).toMatch(/one study pools nothing/);

    const collinear = csv("collinear.csv", "site,y,v,t,t2\nA,0.1,0.2,1,2\nB,0.3,0.1,2,4\nC,0.2,0.1,3,6\nD,0.5,0.3,4,8\n");
    result = await run(collinear, "--estimate", "y", "--variance", "v", "--moderator", "t", "--moderator", "t2");
    expect(result.stderr).toMatch(/'t2' is a linear combination of 't'/);

    const gap = csv("gap.csv", "site,y,v,zone\nA,0.1,0.2,oak\nB,0.3,0.1,NA\nC,0.2,0.1,pine\n");
    result = await run(gap, "--estimate", "y", "--variance", "v", "--moderator", "zone");
    expect(result.stderr).toMatch(/row 2, zone: 'NA' marks a missing value/);

    const oneLevel = csv("one-level.csv", "site,y,v,zone\nA,0.1,0.2,oak\nB,0.3,0.1,oak\nC,0.2,0.1,oak\n");
    result = await run(oneLevel, "--estimate", "y", "--variance", "v", "--moderator", "zone");
    expect(result.stderr).toMatch(/single level \('oak'\)/);
  });

  it("is listed in help, with the usage text explaining categorical moderators", async () => {
    let stdout = "";
    await runCli(["help", "pool"], { stdout: (t) => (stdout += t), stderr: () => undefined });
    expect(stdout).toMatch(/any other column is categorical/);
    expect(stdout).toMatch(/--reference COL=LEVEL/);
  });
});
