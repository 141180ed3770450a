import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";

/**
 * The migrated database matches schema.prisma: every model can be written and read back
 * through the generated client, with every field, on each provider.
 */
const providers = await testProviders();

describe.each(providers)("every model round-trips on %s", (provider) => {
  let database: TestDatabase;
  beforeAll(async () => {
    database = await createTestDatabase(provider);
  });
  afterAll(async () => {
    await database.drop();
  });

  it("writes and reads User, Species, Site, Moderator, ModeratorValue, Submission, SiteYear, BroodRecord, Estimate, Analysis, AnalysisRun, NetworkSetting, ColumnMapping, Job, Session, ApiToken, SignInAttempt, AuditEntry", async () => {
    const { db } = database;
    const user = await db.user.create({ data: { email: "lead@example.org", displayName: "Site Lead", role: "site_lead" } });
    const species = await db.species.create({ data: { scientificName: "Parus major", commonName: "Great tit" } });
    const site = await db.site.create({
      data: {
        code: "TST",
        name: "Test Wood",
        speciesId: species.id,
        latitude: 52.5,
        longitude: -1.25,
        elevationM: 120,
        habitat: "deciduous",
        firstYear: 1990,
        lastYear: 2020,
        dateConvention: "apr1",
        leadUserId: user.id,
        notes: "notes",
      },
    });
    const moderator = await db.moderator.create({
      data: { key: "warming_rate", label: "Spring warming rate", unit: "C per decade", kind: "numeric", description: "d" },
    });
    const value = await db.moderatorValue.create({
      data: { moderatorId: moderator.id, siteId: site.id, numericValue: 0.31, standardError: 0.05, source: "computed", method: "OLS" },
    });
    const superseded = await db.submission.create({
      data: { siteId: site.id, kind: "brood_records", fileName: "old.csv", sha256: "a".repeat(64), rowCount: 1, status: "superseded" },
    });
    const submission = await db.submission.create({
      data: {
        siteId: site.id,
        kind: "brood_records",
        fileName: "broods.csv",
        sha256: "b".repeat(64),
        rowCount: 1,
        submittedById: user.id,
        supersedesId: superseded.id,
      },
    });
    // Every status round-trips: a withdrawn submission (a soft delete) on both engines (PostgreSQL enum value of migration 0003).
    await db.submission.create({
      data: { siteId: site.id, kind: "estimates", fileName: "withdrawn.csv", sha256: "f".repeat(64), rowCount: 0, status: "withdrawn" },
    });
    const siteYear = await db.siteYear.create({
      data: { siteId: site.id, year: 2001, foodPeakDoy: 140.5, foodPeakSe: 1.5, meanSpringTempC: 9.25, broodCount: 80, submissionId: submission.id },
    });
    const brood = await db.broodRecord.create({
      data: { siteId: site.id, year: 2001, femaleId: "F-1", layDateDoy: 110, clutchSize: 9, hatchDateDoy: 125, fledglings: 7, recruits: 1, submissionId: submission.id },
    });
    const estimate = await db.estimate.create({
      data: {
        siteId: site.id,
        submissionId: submission.id,
        outcome: "recruitment",
        level: "within_year",
        term: "linear",
        year: null,
        value: -0.0123,
        standardError: 0.004,
        n: 800,
        scale: "per_day",
        link: "logit",
        source: "computed",
        method: "logistic GLM",
      },
    });
    const analysis = await db.analysis.create({ data: { name: "A", specification: "{}", createdById: user.id } });
    const run = await db.analysisRun.create({ data: { analysisId: analysis.id, dataFingerprint: "c".repeat(64), result: "{}", engineVersion: "0.1.0" } });
    await db.networkSetting.create({ data: { key: "mismatch_offset_days", value: "30" } });
    const mapping = await db.columnMapping.create({ data: { siteId: site.id, kind: "brood_records", mapping: '{"layDateDoy":"Lay date"}' } });
    const job = await db.job.create({ data: { kind: "recompute_site_estimates", payload: "{}", siteId: site.id, progress: 0.5, startedAt: new Date() } });

    const readSite = await db.site.findUniqueOrThrow({
      where: { code: "TST" },
      include: { species: true, leadUser: true, moderatorValues: true, siteYears: true, broodRecords: true, submissions: true, estimates: true },
    });
    expect(readSite).toMatchObject({ latitude: 52.5, longitude: -1.25, elevationM: 120, dateConvention: "apr1", firstYear: 1990 });
    expect(readSite.species.commonName).toBe("Great tit");
    expect(readSite.leadUser?.email).toBe("lead@example.org");
    expect(readSite.moderatorValues).toEqual([value]);
    expect(readSite.siteYears).toEqual([siteYear]);
    expect(readSite.broodRecords).toEqual([brood]);
    expect(readSite.estimates).toEqual([estimate]);
    expect(readSite.submissions.map((s) => s.status).sort()).toEqual(["accepted", "superseded", "withdrawn"]);

    const chain = await db.submission.findUniqueOrThrow({ where: { id: superseded.id }, include: { supersededBy: true } });
    expect(chain.supersededBy?.id).toBe(submission.id);
    const readRun = await db.analysisRun.findUniqueOrThrow({ where: { id: run.id }, include: { analysis: { include: { createdBy: true } } } });
    expect(readRun.analysis.createdBy?.displayName).toBe("Site Lead");
    expect(readRun.createdAt).toBeInstanceOf(Date);
    expect(await db.networkSetting.findUnique({ where: { key: "mismatch_offset_days" } })).toMatchObject({ value: "30" });
    expect(await db.columnMapping.findUnique({ where: { siteId_kind: { siteId: site.id, kind: "brood_records" } } })).toEqual(mapping);
    expect(await db.job.findUniqueOrThrow({ where: { id: job.id } })).toMatchObject({ status: "queued", progress: 0.5, finishedAt: null });
    const session = await db.session.create({ data: { tokenHash: "d".repeat(64), userId: user.id, expiresAt: new Date(Date.now() + 3600_000) } });
    const token = await db.apiToken.create({ data: { userId: user.id, name: "uploader", tokenHash: "e".repeat(64), prefix: "pp_abc" } });
    await db.signInAttempt.create({ data: { email: "lead@example.org", address: "127.0.0.1", succeeded: false } });
    const audit = await db.auditEntry.create({
      data: { actorUserId: user.id, actorLabel: "Site Lead", action: "submission.create", entityType: "Submission", entityId: String(submission.id), summary: "{}", sha256: "b".repeat(64) },
    });
    const withAccounts = await db.user.findUniqueOrThrow({ where: { id: user.id }, include: { sessions: true, apiTokens: true, auditEntries: true } });
    expect(withAccounts).toMatchObject({ active: true, passwordHash: null });
    expect(withAccounts.sessions).toEqual([session]);
    expect(withAccounts.apiTokens).toEqual([token]);
    expect(withAccounts.auditEntries).toEqual([audit]);
    expect(await db.signInAttempt.count({ where: { email: "lead@example.org", succeeded: false } })).toBe(1);
    expect(await db.moderator.findUnique({ where: { key: "warming_rate" } })).toMatchObject({ builtIn: false, kind: "numeric" });
  });

  it("refuses to change an audit entry once written (append-only)", async () => {
    const { db } = database;
    const entry = await db.auditEntry.create({ data: { actorLabel: "system", action: "test", entityType: "Test", summary: "{}" } });
    await expect(db.auditEntry.update({ where: { id: entry.id }, data: { summary: '{"tampered":true}' } })).rejects.toThrow(/append-only/);
    expect((await db.auditEntry.findUniqueOrThrow({ where: { id: entry.id } })).summary).toBe("{}");
  });

  it("enforces unique keys and foreign keys", async () => {
    const { db } = database;
    await expect(db.user.create({ data: { email: "lead@example.org", displayName: "Again" } })).rejects.toThrow();
    await expect(
      db.broodRecord.create({
        data: { siteId: 999_999, year: 2001, femaleId: "F-9", layDateDoy: 110, clutchSize: 9, fledglings: 0, recruits: 0, submissionId: 999_999 },
      }),
    ).rejects.toThrow();
  });
});
