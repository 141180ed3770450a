import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { runCli } from "@/lib/cli/run-cli";
import { expectClose } from "@/test/helpers/expect-close";
import { readRFixture } from "@/test/helpers/r-fixture";

const dir = mkdtempSync(join(tmpdir(), "phenopool-cli-estimate-"));
function file(name: string, text: string): string {
  const path = join(dir, name);
  writeFileSync(path, text);
  return path;
}
async function cli(...argv: string[]) {
  let stdout = "";
  let stderr = "";
  const code = await runCli(argv, { stdout: (t) => (stdout += t), stderr: (t) => (stderr += t) });
  return { code, stdout, stderr };
}

interface RegimeFixture {
  broods: { year: number[]; female_id: string[]; lay_date: number[]; clutch_size: number[]; hatch_date: number[]; fledglings: number[]; recruits: number[] };
  food_peaks: { year: number[]; food_peak_date: number[] };
  outcomes: Record<string, { pooled: { linear: { estimate: number; se: number }; n: number } }>;
}
const fixture = readRFixture<RegimeFixture>("brood-glm-few-broods.json");
const b = fixture.broods;
const isLeap = (y: number) => y % 4 === 0;
const broodsCsv = (apr1: boolean) =>
  "site,year,female_id,lay_date,clutch_size,fledglings,recruits,hatch_date\n" +
  b.year
    .map((y, i) => {
      const shift = apr1 ? (isLeap(y) ? 91 : 90) : 0;
      return `ELM,${y},${b.female_id[i]},${b.lay_date[i]! - shift},${b.clutch_size[i]},${b.fledglings[i]},${b.recruits[i]},${b.hatch_date[i]! - shift}`;
    })
    .join("\n");
const peaksCsv = (apr1: boolean) =>
  "site,year,food_peak_date\n" +
  fixture.food_peaks.year.map((y, k) => `ELM,${y},${fixture.food_peaks.food_peak_date[k]! - (apr1 ? (isLeap(y) ? 91 : 90) : 0)}`).join("\n");

describe("cli estimate", () => {
  const broods = file("broods.csv", broodsCsv(false));
  const peaks = file("peaks.csv", peaksCsv(false));

  it("prints a JSON array of estimates with every field; values match R's glm (few-broods regime)", async () => {
    const { code, stdout, stderr } = await cli("estimate", broods, "--peaks", peaks, "--bootstrap", "100", "--seed", "2", "--format", "json");
    expect(code).toBe(0);
    const estimates = JSON.parse(stdout) as Record<string, unknown>[];
    expect(Object.keys(estimates[0]!).sort()).toEqual(["estimate", "level", "link", "method", "n", "outcome", "scale", "se", "site", "term", "warnings", "year"]);
    const failure = estimates.find((e) => e.outcome === "fledging_failure" && e.level === "within_year" && e.term === "linear" && e.year === null)!;
    expectClose(failure.estimate as number, fixture.outcomes.fledging_failure!.pooled.linear.estimate, { rtol: 1e-6, label: "c (R glm)" });
    expectClose(failure.se as number, fixture.outcomes.fledging_failure!.pooled.linear.se, { rtol: 1e-6, label: "SE(c) (R glm)" });
    expect(estimates.filter((e) => e.outcome === "selection_gradient")).toHaveLength(2);
    expect(stderr).toMatch(/not computed: fledglings_successful within_year 2015: 15 broods/);
  });

  it("converts 1 = 1 April dates on input and gives the same estimates", async () => {
    const plain = JSON.parse((await cli("estimate", broods, "--peaks", peaks, "--bootstrap", "0", "--format", "json")).stdout);
    const april = await cli("estimate", file("broods-apr.csv", broodsCsv(true)), "--peaks", file("peaks-apr.csv", peaksCsv(true)), "--dates", "apr1", "--bootstrap", "0", "--format", "json");
    expect(april.code).toBe(0);
    expect(JSON.parse(april.stdout).map((e: { estimate: number }) => e.estimate)).toEqual(plain.map((e: { estimate: number }) => e.estimate));
  });

  it("uses --offset in the mismatch and says so", async () => {
    const { stdout } = await cli("estimate", broods, "--peaks", peaks, "--offset", "25", "--bootstrap", "0", "--format", "json");
    expect(JSON.parse(stdout)[0].method).toContain("lay date + 25 d");
  });

  it("prints a table by default", async () => {
    const { code, stdout } = await cli("estimate", broods, "--peaks", peaks, "--bootstrap", "0");
    expect(code).toBe(0);
    expect(stdout.split("\n")[0]).toMatch(/^site\s+outcome\s+level\s+term\s+year\s+estimate\s+se\s+n\s+link\s+scale/);
  });

  it("names the file, row and column of bad input, and computes nothing", async () => {
    const bad = file("bad.csv", "site,year,female_id,lay_date,clutch_size,fledglings,recruits\nELM,2015,F1,120,9,12,0\nELM,2015,F2,abc,9,3,0\n");
    const { code, stdout, stderr } = await cli("estimate", bad, "--peaks", peaks);
    expect(code).toBe(2);
    expect(stdout).toBe("");
    expect(stderr).toMatch(/bad\.csv, row 2, lay_date: 'abc' is not a day number/);
    const excess = file("excess.csv", "site,year,female_id,lay_date,clutch_size,fledglings,recruits\nELM,2015,F1,120,9,12,0\n");
    expect((await cli("estimate", excess, "--peaks", peaks)).stderr).toMatch(/excess\.csv, row 1, fledglings: fledglings 12 exceeds clutch size 9/);
    const missing = file("missing.csv", "site,year,lay_date\nELM,2015,120\n");
    expect((await cli("estimate", missing, "--peaks", peaks)).stderr).toMatch(/no column 'clutch_size'|no column 'female_id'/);
    expect((await cli("estimate", broods)).stderr).toMatch(/--peaks PEAKS.csv is required/);
    expect((await cli("estimate", broods, "--peaks", peaks, "--bootstrap", "1")).stderr).toMatch(/at least 2/);
    expect((await cli("estimate", broods, "--peaks", peaks, "--dates", "mar1")).stderr).toMatch(/--dates must be one of jan1, apr1/);
  });
});

describe("cli peak and warming", () => {
  it("fits the food peak of each site-year from frass (R nls season case)", async () => {
    const reference = readRFixture<{ season: { date: number[]; frass: number[]; peak: number; peak_se: number } }>("brood-nls-frass.json").season;
    const frass = file("frass.csv", "site,year,date,frass\n" + reference.date.map((d, i) => `ELM,2019,${d},${reference.frass[i]}`).join("\n"));
    const { code, stdout } = await cli("peak", frass, "--format", "json");
    expect(code).toBe(0);
    const [fit] = JSON.parse(stdout);
    expectClose(fit.food_peak_date, reference.peak, { rtol: 1e-6, label: "peak (R nls)" });
    expectClose(fit.se, reference.peak_se, { rtol: 1e-6, label: "peak SE (R nls)" });
    expect(fit.plausible).toBe(true);
    const bad = file("frass-bad.csv", "site,year,date,frass\nELM,2019,120,-1\n");
    expect((await cli("peak", bad)).stderr).toMatch(/row 1, frass: frass -1 is negative/);
  });

  it("reports warming rates per decade (R lm) and refuses a site with too few years", async () => {
    const reference = readRFixture<{ years: number[]; temperature: number[]; ls_slope_per_decade: number; ls_se_per_decade: number }>("brood-lm-warming.json");
    const temps = file(
      "temps.csv",
      "site,year,mean_spring_temp_c\n" + reference.years.map((y, i) => `ELM,${y},${reference.temperature[i]}`).join("\n") + "\nASH,2001,8.2\nASH,2002,8.4\n",
    );
    const { code, stdout, stderr } = await cli("warming", temps, "--format", "json");
    expect(code).toBe(0);
    const [elm] = JSON.parse(stdout);
    expectClose(elm.slope_per_decade, reference.ls_slope_per_decade, { rtol: 1e-9, label: "slope (R lm)" });
    expectClose(elm.se, reference.ls_se_per_decade, { rtol: 1e-9, label: "SE (R lm)" });
    expect(stderr).toMatch(/site ASH: not computed: .*at least 3 years/);
  });
});
