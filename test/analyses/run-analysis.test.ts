import { readFileSync } from "node:fs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createAnalysis } from "@/lib/analyses/analyses";
import { getAnalysisRun, runAnalysis } from "@/lib/analyses/run-analysis";
import { analysisSpecificationSchema } from "@/lib/analyses/specification";
import type { Actor } from "@/lib/auth/actor";
import { AppError } from "@/lib/errors/app-error";
import { createModerator, setModeratorValue } from "@/lib/network/moderators";
import { moderatorInputSchema, moderatorValueInputSchema } from "@/lib/network/moderator-input";
import { createSite } from "@/lib/network/create-site";
import { siteInputSchema } from "@/lib/network/site-input";
import { writeSubmission } from "@/lib/submissions/write-submission";
import type { MetaResultJson } from "@/lib/stats/meta/result-json";
import { expectClose } from "@/test/helpers/expect-close";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";

/**
 * Running an analysis end to end: the current estimates it names are selected, joined with
 * their sites' moderators, fitted, and stored with a fingerprint of the data read.
 * Reference: test/fixtures/r-stats/analysis-run-wls.json (R stats::lm with weights 1/v; a
 * common-effect model with known variances is weighted least squares, Hedges & Olkin 1985 ch. 8).
 */
const reference = JSON.parse(readFileSync("test/fixtures/r-stats/analysis-run-wls.json", "utf8")) as {
  estimates: number[];
  standardErrors: number[];
  warming: number[];
  pooled: { estimate: number; standardError: number; q: number };
  regression: { intercept: number; interceptSe: number; slope: number; slopeSe: number };
};
const CODES = ["S1", "S2", "S3", "S4"];
const providers = await testProviders();

const estimateRow = (value: number, standardError: number, outcome = "recruitment") => ({
  outcome, level: "within_year", term: "linear", year: null, value, standardError, n: 120, scale: "per_day", link: "logit", method: "logistic regression, Wald SE",
});

describe.each(providers)("running an analysis on %s", (provider) => {
  let database: TestDatabase;
  let sha = 0;
  const submit = (siteCode: string, rows: unknown[]) =>
    writeSubmission(database.db, { siteCode, kind: "estimates", fileName: "e.csv", sha256: (++sha).toString(16).padStart(64, "0"), rows });
  const actorPromise = Promise.resolve<Actor>({ kind: "user", userId: null, role: "coordinator", label: "test coordinator", siteIds: [], via: "none" });

  beforeAll(async () => {
    database = await createTestDatabase(provider);
    for (const [index, code] of CODES.entries()) {
      await createSite(database.db, siteInputSchema.parse({ code, name: code, species: { scientificName: "Parus major", commonName: "Great tit" }, latitude: 50 + index, longitude: 5, firstYear: 2000, lastYear: 2010 }), await actorPromise);
      await submit(code, [estimateRow(reference.estimates[index]!, reference.standardErrors[index]!), estimateRow(0.3, 0.1, "fledging_failure")]);
    }
    await createModerator(database.db, moderatorInputSchema.parse({ key: "warming", label: "Warming", kind: "numeric", description: "C per decade" }), await actorPromise);
    for (const [index, code] of CODES.entries()) {
      await setModeratorValue(database.db, code, "warming", moderatorValueInputSchema.parse({ numericValue: reference.warming[index] }), await actorPromise);
    }
  });
  afterAll(async () => {
    await database.drop();
  });

  const save = async (spec: Record<string, unknown>) =>
    (await createAnalysis(database.db, analysisSpecificationSchema.parse({ outcome: "recruitment", level: "within_year", term: "linear", ...spec }), await actorPromise)).id;

  it("pools the four site estimates as R's weighted least squares does (common effect)", async () => {
    const id = await save({ name: "pooled", model: { type: "common_effect" } });
    const run = await runAnalysis(database.db, id, await actorPromise);
    const fit = run.result.fit as MetaResultJson;
    expect(fit.model).toMatchObject({ k: 4, method: "fe", test: "z", confidence_level: 0.95 });
    expectClose(fit.coefficients[0]!.estimate, reference.pooled.estimate, { rtol: 1e-10, label: "pooled estimate vs R lm(weights)" });
    expectClose(fit.coefficients[0]!.se, reference.pooled.standardError, { rtol: 1e-10, label: "pooled SE vs R lm(weights)" });
    expectClose(fit.heterogeneity.q, reference.pooled.q, { rtol: 1e-10, label: "Cochran's Q vs R weighted residual sum of squares" });
    expect(run.engineVersion).toBe(JSON.parse(readFileSync("package.json", "utf8")).version);
  });

  it("joins each site's moderator value: the meta-regression matches R's lm(y ~ warming, weights)", async () => {
    const id = await save({ name: "by warming", model: { type: "common_effect" }, moderators: ["warming"] });
    const run = await runAnalysis(database.db, id, await actorPromise);
    const [intercept, slope] = (run.result.fit as MetaResultJson).coefficients;
    expectClose(intercept!.estimate, reference.regression.intercept, { rtol: 1e-9, label: "intercept vs R" });
    expectClose(intercept!.se, reference.regression.interceptSe, { rtol: 1e-9, label: "intercept SE vs R" });
    expectClose(slope!.estimate, reference.regression.slope, { rtol: 1e-9, label: "slope vs R" });
    expectClose(slope!.se, reference.regression.slopeSe, { rtol: 1e-9, label: "slope SE vs R" });
  });

  it("uses latitude from the site record, and leaves out (and lists) a site without a moderator value", async () => {
    await createModerator(database.db, moderatorInputSchema.parse({ key: "canopy", label: "Canopy", kind: "categorical", description: "Dominant tree" }), await actorPromise);
    for (const [code, canopy] of [["S1", "oak"], ["S2", "pine"], ["S3", "oak"]] as const) {
      await setModeratorValue(database.db, code, "canopy", moderatorValueInputSchema.parse({ categoricalValue: canopy }), await actorPromise);
    }
    type Selection = { studies: { siteCode: string; moderators: Record<string, unknown> }[]; excluded: { siteCode: string; reason: string }[] };
    const byLatitude = await runAnalysis(database.db, await save({ name: "by latitude", moderators: ["latitude"], model: { type: "common_effect" } }), await actorPromise);
    expect((byLatitude.result.selection as Selection).studies.map((s) => s.moderators.latitude)).toEqual([50, 51, 52, 53]);
    const byCanopy = await runAnalysis(database.db, await save({ name: "by canopy", moderators: ["canopy"], model: { type: "common_effect" } }), await actorPromise);
    const selection = byCanopy.result.selection as Selection;
    expect(selection.studies.map((s) => [s.siteCode, s.moderators.canopy])).toEqual([["S1", "oak"], ["S2", "pine"], ["S3", "oak"]]);
    expect(selection.excluded).toEqual([expect.objectContaining({ siteCode: "S4", reason: "site S4 has no value for canopy" })]);
    const terms = (byCanopy.result.fit as { coefficients: { term: string }[] }).coefficients.map((c) => c.term);
    expect(terms).toEqual(["intercept", "canopy[pine]"]);
  }, 30_000);

  it("fingerprints what a run read: unrelated data leave it alone, a changed moderator value changes it", async () => {
    const id = await save({ name: "fingerprint", model: { type: "common_effect" }, moderators: ["warming"] });
    const run = await runAnalysis(database.db, id, await actorPromise);
    await submit("S1", [estimateRow(reference.estimates[0]!, reference.standardErrors[0]!), estimateRow(0.31, 0.1, "fledging_failure")]);
    // A new submission with the same recruitment estimate is new data: the estimate has a new id.
    expect((await getAnalysisRun(database.db, id, run.id)).dataChanged).toBe(true);
    const rerun = await runAnalysis(database.db, id, await actorPromise);
    await setModeratorValue(database.db, "S3", "canopy", moderatorValueInputSchema.parse({ categoricalValue: "pine" }), await actorPromise);
    expect((await getAnalysisRun(database.db, id, rerun.id)).dataChanged).toBe(false);
    await setModeratorValue(database.db, "S3", "warming", moderatorValueInputSchema.parse({ numericValue: 0.06 }), await actorPromise);
    expect((await getAnalysisRun(database.db, id, rerun.id)).dataChanged).toBe(true);
  });

  it("refuses, with the reason, a selection that mixes two estimates for one site", async () => {
    await writeSubmission(database.db, { siteCode: "S2", kind: "brood_records", fileName: "b.csv", sha256: "f".repeat(64), rows: [{ year: 2005, femaleId: "A", layDateDoy: 100, clutchSize: 8, hatchDateDoy: null, fledglings: 6, recruits: 1 }] });
    const broods = await database.db.submission.findFirstOrThrow({ where: { sha256: "f".repeat(64) } });
    const s2 = await database.db.site.findUniqueOrThrow({ where: { code: "S2" } });
    await database.db.estimate.create({ data: { ...estimateRow(-0.04, 0.03), source: "computed", siteId: s2.id, submissionId: broods.id } as never });
    const id = await save({ name: "clash", model: { type: "common_effect" } });
    const error = (await runAnalysis(database.db, id, await actorPromise).catch((e: unknown) => e)) as AppError;
    expect(error).toBeInstanceOf(AppError);
    expect(error.code).toBe("cannot_compute");
    expect(error.message).toMatch(/more than one matching estimate/);
    const computedOnly = await save({ name: "computed only", model: { type: "common_effect" }, source: "computed" });
    const one = (await runAnalysis(database.db, computedOnly, await actorPromise).catch((e: unknown) => e)) as AppError;
    expect(one.code).toBe("cannot_compute");
    expect(one.message).toMatch(/at least two studies/);
    expect(await database.db.analysisRun.count({ where: { analysisId: { in: [id, computedOnly] } } })).toBe(0);
  });
});
