import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { recomputeSiteEstimates, WARMING_RATE_MODERATOR_KEY } from "@/lib/estimates/recompute-site-estimates";
import { computeSiteEstimates } from "@/lib/estimates/compute-site-estimates";
import { writeSubmission } from "@/lib/submissions/write-submission";
import { updateNetworkSettings } from "@/lib/settings/network-settings";
import { AppError } from "@/lib/errors/app-error";
import { expectClose } from "@/test/helpers/expect-close";
import { readRFixture } from "@/test/helpers/r-fixture";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";

interface RegimeFixture {
  broods: { year: number[]; female_id: string[]; lay_date: number[]; clutch_size: number[]; hatch_date: number[]; fledglings: number[]; recruits: number[] };
  food_peaks: { year: number[]; food_peak_date: number[] };
  outcomes: Record<string, { pooled: { linear: { estimate: number; se: number } } }>;
}
const fixture = readRFixture<RegimeFixture>("brood-glm-few-broods.json");
const broodRows = fixture.broods.year.map((year, i) => ({
  year,
  femaleId: fixture.broods.female_id[i]!,
  layDateDoy: fixture.broods.lay_date[i]!,
  clutchSize: fixture.broods.clutch_size[i]!,
  hatchDateDoy: fixture.broods.hatch_date[i]!,
  fledglings: fixture.broods.fledglings[i]!,
  recruits: fixture.broods.recruits[i]!,
}));
// Spring temperatures: 9.0, 9.4, 9.5, 10.1 for 2015-2018; by hand the least-squares slope is 0.34 C/yr.
const temperatures = [9.0, 9.4, 9.5, 10.1];
const siteYearRows = fixture.food_peaks.year.map((year, k) => ({ year, foodPeakDoy: fixture.food_peaks.food_peak_date[k]!, meanSpringTempC: temperatures[k]! }));

const providers = await testProviders();

describe.each(providers)("recomputing a site's estimates on %s", (provider) => {
  let database: TestDatabase;
  let siteId: number;
  let otherSiteId: number;
  beforeAll(async () => {
    database = await createTestDatabase(provider);
    const { db } = database;
    const species = await db.species.create({ data: { scientificName: "Parus major", commonName: "Great tit" } });
    siteId = (await db.site.create({ data: { code: "ELM", name: "Elm Hollow", speciesId: species.id, latitude: 52, longitude: 5, firstYear: 2015, lastYear: 2018 } })).id;
    otherSiteId = (await db.site.create({ data: { code: "ASH", name: "Ash Ridge", speciesId: species.id, latitude: 55, longitude: 9, firstYear: 2015, lastYear: 2018 } })).id;
    await writeSubmission(db, { siteCode: "ELM", kind: "brood_records", fileName: "broods.csv", sha256: "a".repeat(64), rows: broodRows });
    await writeSubmission(db, { siteCode: "ELM", kind: "site_year_covariates", fileName: "years.csv", sha256: "b".repeat(64), rows: siteYearRows });
    const uploaded = await writeSubmission(db, {
      siteCode: "ELM",
      kind: "estimates",
      fileName: "own.csv",
      sha256: "c".repeat(64),
      rows: [{ outcome: "recruitment", level: "within_year", term: "linear", year: 2016, value: -0.1, standardError: 0.05, n: 25, scale: "per_day", link: "logit", method: "the site's own logistic fit" }],
    });
    expect(uploaded.rowCount).toBe(1);
    const moderator = await db.moderator.create({ data: { key: WARMING_RATE_MODERATOR_KEY, label: "Spring warming rate", unit: "degrees C per decade", kind: "numeric", description: "trend" } });
    await db.moderatorValue.create({ data: { moderatorId: moderator.id, siteId, numericValue: 0.5, source: "entered", method: "entered by the site" } });
  });
  afterAll(async () => {
    await database.drop();
  });

  it("writes the computed estimates (matching R's glm), keeps uploaded ones, and writes the warming rate as computed", async () => {
    const { db } = database;
    const report = await recomputeSiteEstimates(db, siteId, { bootstrapReplicates: 100, seed: 4 });
    expect(report.offsetDays).toBe(30);
    const stored = await db.estimate.findMany({ where: { siteId, source: "computed" } });
    expect(stored.length).toBe(report.estimatesWritten);
    expect(stored.every((e) => e.submissionId === report.submissionId && e.standardError > 0)).toBe(true);
    expect(stored.filter((e) => e.outcome !== "selection_gradient").every((e) => e.method.includes("lay date + 30 d"))).toBe(true);
    expect(stored.filter((e) => e.outcome === "selection_gradient").map((e) => e.term).sort()).toEqual(["linear", "quadratic"]);
    const failure = stored.find((e) => e.outcome === "fledging_failure" && e.level === "within_year" && e.term === "linear" && e.year === null)!;
    expectClose(failure.value, fixture.outcomes.fledging_failure!.pooled.linear.estimate, { rtol: 1e-6, label: "stored c (R glm)" });
    expectClose(failure.standardError, fixture.outcomes.fledging_failure!.pooled.linear.se, { rtol: 1e-6, label: "stored SE(c) (R glm)" });
    expect(await db.estimate.count({ where: { siteId, source: "uploaded" } })).toBe(1);
    const warming = await db.moderatorValue.findFirst({ where: { siteId, moderator: { key: WARMING_RATE_MODERATOR_KEY } } });
    expect(warming!.source).toBe("computed");
    // Hand calculation: years centred -1.5..1.5, Sxx = 5, Sxy = 1.7, slope 0.34 C/yr = 3.4 C/decade.
    expectClose(warming!.numericValue!, 3.4, { rtol: 1e-12, label: "warming rate" });
    expect(warming!.standardError!).toBeGreaterThan(0);
    expect(warming!.method).toMatch(/Theil-Sen/);
  });

  it("replaces the previous computed set, using the network's mismatch offset", async () => {
    const { db } = database;
    const before = await db.estimate.findMany({ where: { siteId, source: "computed" }, select: { id: true } });
    await updateNetworkSettings(db, { mismatch_offset_days: 27 });
    const report = await recomputeSiteEstimates(db, siteId, { bootstrapReplicates: 100, seed: 4 });
    expect(report.estimatesReplaced).toBe(before.length);
    const after = await db.estimate.findMany({ where: { siteId, source: "computed" } });
    expect(after.length).toBe(report.estimatesWritten);
    expect(after.some((e) => before.some((b) => b.id === e.id))).toBe(false);
    expect(after.every((e) => e.outcome === "selection_gradient" || e.method.includes("lay date + 27 d"))).toBe(true);
    // The same numbers as the pure computation with that offset.
    const pure = computeSiteEstimates(
      broodRows,
      new Map(siteYearRows.map((r) => [r.year, r.foodPeakDoy])),
      { offsetDays: 27, bootstrapReplicates: 100, seed: 4 },
    );
    expect(after.map((e) => e.value).sort()).toEqual(pure.estimates.map((e) => e.estimate).sort());
    await updateNetworkSettings(db, { mismatch_offset_days: 30 });
  });

  it("reports its progress model by model and bootstrap block by block, then writes the same estimates", async () => {
    const { db } = database;
    const steps: { fraction: number; message: string }[] = [];
    const report = await recomputeSiteEstimates(db, siteId, {
      bootstrapReplicates: 200,
      seed: 4,
      sliceMs: 0,
      onStep: async (step) => {
        steps.push(step);
      },
    });
    const fractions = steps.map((s) => s.fraction);
    expect(fractions[0]).toBe(0);
    expect(fractions.every((f, i) => f >= 0 && f <= 1 && (i === 0 || f >= fractions[i - 1]!))).toBe(true);
    expect(steps.some((s) => /^fitting fledging failure, all years \(1 of \d+ models\)$/.test(s.message))).toBe(true);
    expect(steps.some((s) => /^fitting local recruitment, 2016 /.test(s.message))).toBe(true);
    expect(steps.filter((s) => s.message.startsWith("bootstrap of the selection gradients")).length).toBe(3);
    expect(steps.at(-1)!.message).toBe(`writing ${report.estimatesWritten} estimates`);
    // Driven in steps or in one call, the numbers are those of the pure computation (checked against R above).
    const pure = computeSiteEstimates(broodRows, new Map(siteYearRows.map((r) => [r.year, r.foodPeakDoy])), { bootstrapReplicates: 200, seed: 4 });
    const stored = await db.estimate.findMany({ where: { siteId, source: "computed" } });
    expect(stored.map((e) => e.value).sort()).toEqual(pure.estimates.map((e) => e.estimate).sort());
  });

  it("writes nothing when stopped part-way, leaving the previous estimates as they were", async () => {
    const { db } = database;
    const before = await db.estimate.findMany({ where: { siteId }, orderBy: { id: "asc" } });
    const controller = new AbortController();
    let steps = 0;
    const error = await recomputeSiteEstimates(db, siteId, {
      bootstrapReplicates: 200,
      sliceMs: 0,
      signal: controller.signal,
      onStep: async () => {
        steps += 1;
        if (steps === 5) controller.abort(new Error("stopped by the test"));
      },
    }).catch((e: unknown) => e);
    expect((error as Error).message).toBe("stopped by the test");
    expect(await db.estimate.findMany({ where: { siteId }, orderBy: { id: "asc" } })).toEqual(before);
  });

  it("refuses a site without brood records and changes nothing", async () => {
    const { db } = database;
    const count = await db.estimate.count();
    const error = await recomputeSiteEstimates(db, otherSiteId).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(AppError);
    expect((error as AppError).code).toBe("cannot_compute");
    expect((error as AppError).message).toMatch(/ASH has no accepted brood-record submission/);
    expect(await db.estimate.count()).toBe(count);
    await expect(recomputeSiteEstimates(db, 99999)).rejects.toThrow(/does not exist/);
  });
});
