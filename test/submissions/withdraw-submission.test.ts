import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Actor } from "@/lib/auth/actor";
import { AppError } from "@/lib/errors/app-error";
import { withdrawSubmission } from "@/lib/submissions/withdraw-submission";
import { writeSubmission } from "@/lib/submissions/write-submission";
import { listBroodRecords } from "@/lib/network/list-brood-records";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";

/**
 * Withdrawing (deleting) a submission: a soft delete that keeps the rows and provenance, makes
 * the previous version current again when the current one is withdrawn, and leaves the chain of
 * versions so the next upload supersedes the reinstated one.
 */
const providers = await testProviders();

const brood = (femaleId: string) => ({ year: 2010, femaleId, layDateDoy: 110, clutchSize: 8, hatchDateDoy: null, fledglings: 6, recruits: 1 });
const EVERY_SITE = { allSites: true } as const;

describe.each(providers)("withdrawing a submission on %s", (provider) => {
  let database: TestDatabase;
  let actor: Actor;
  let sha = 0;
  const write = async (femaleId: string, kind: "brood_records" | "site_year_covariates" = "brood_records") =>
    (
      await writeSubmission(database.db, {
        siteCode: "ASH",
        kind,
        fileName: `${femaleId}.csv`,
        sha256: (++sha).toString(16).padStart(64, "0"),
        rows: kind === "brood_records" ? [brood(femaleId)] : [{ year: 2010, foodPeakDoy: 140, foodPeakSe: null, meanSpringTempC: 9.5, broodCount: null }],
      })
    ).submissionId;
  const current = async () => (await listBroodRecords(database.db, { site: ["ASH"] }, EVERY_SITE)).items.map((b) => b.femaleId);
  const statusOf = async (id: number) => (await database.db.submission.findUniqueOrThrow({ where: { id } })).status;

  beforeAll(async () => {
    database = await createTestDatabase(provider);
    const { db } = database;
    const user = await db.user.create({ data: { email: "lead@example.org", displayName: "Lead", role: "site_lead" } });
    const species = await db.species.create({ data: { scientificName: "Parus major", commonName: "Great tit" } });
    const site = await db.site.create({ data: { code: "ASH", name: "Ash", speciesId: species.id, latitude: 51, longitude: 0, firstYear: 2000, lastYear: 2020, leadUserId: user.id } });
    actor = { kind: "user", userId: user.id, role: "site_lead", label: "Lead <lead@example.org>", siteIds: [site.id], via: "session" };
  });
  afterAll(async () => database.drop());

  it("makes the previous version current again when the current one is withdrawn, keeping its rows, and audits it with the SHA-256", async () => {
    const first = await write("A-1");
    const second = await write("B-1");
    expect(await current()).toEqual(["B-1"]);
    const result = await withdrawSubmission(database.db, second, actor);
    expect(result).toMatchObject({ submissionId: second, reinstatedId: first, job: { kind: "recompute_site_estimates", status: "queued" } });
    expect(await current()).toEqual(["A-1"]);
    expect([await statusOf(first), await statusOf(second)]).toEqual(["accepted", "withdrawn"]);
    expect(await database.db.broodRecord.count({ where: { submissionId: second } })).toBe(1);
    const entry = await database.db.auditEntry.findFirstOrThrow({ where: { action: "submission.withdraw", entityId: String(second) } });
    expect(entry).toMatchObject({ actorUserId: actor.userId, entityType: "submission", sha256: sha.toString(16).padStart(64, "0") });
    expect(JSON.parse(entry.summary)).toMatchObject({ before: { status: "accepted", supersedesId: first }, after: { status: "withdrawn", reinstatedId: first, siteCode: "ASH" } });
    // The withdrawn version no longer claims to supersede the reinstated one, so the next upload can.
    const third = await write("C-1");
    expect((await database.db.submission.findUniqueOrThrow({ where: { id: third } })).supersedesId).toBe(first);
    expect(await current()).toEqual(["C-1"]);
  });

  it("withdraws an earlier version without touching the current one, and skips withdrawn versions when reinstating", async () => {
    const { db } = database;
    const [older, middle, newest] = [await write("D-1"), await write("E-1"), await write("F-1")];
    const kept = await withdrawSubmission(db, middle, actor);
    expect(kept).toEqual({ submissionId: middle, reinstatedId: null, job: null });
    expect(await current()).toEqual(["F-1"]);
    const result = await withdrawSubmission(db, newest, actor);
    expect(result.reinstatedId).toBe(older);
    expect(await current()).toEqual(["D-1"]);
    expect(await statusOf(middle)).toBe("withdrawn");
    expect((await db.submission.findUniqueOrThrow({ where: { id: middle } })).supersedesId).toBeNull();
    expect(await db.submission.count({ where: { siteId: actor.siteIds[0], kind: "brood_records", status: "accepted" } })).toBe(1);
  });

  it("leaves a site with no current submission of the kind when the only remaining version is withdrawn", async () => {
    const { db } = database;
    const years = await write("years", "site_year_covariates");
    const result = await withdrawSubmission(db, years, actor);
    // The site still has brood records: its estimates are recomputed without the covariates.
    expect(result.reinstatedId).toBeNull();
    expect(result.job).not.toBeNull();
    expect(await db.submission.count({ where: { kind: "site_year_covariates", status: "accepted" } })).toBe(0);
  });

  it("refuses an unknown submission and one withdrawn already, writing nothing", async () => {
    const { db } = database;
    const before = await db.auditEntry.count();
    const withdrawn = await db.submission.findFirstOrThrow({ where: { status: "withdrawn" } });
    const again = (await withdrawSubmission(db, withdrawn.id, actor).catch((e: unknown) => e)) as AppError;
    expect(again).toMatchObject({ code: "conflict", message: `submission ${withdrawn.id} is withdrawn already` });
    expect(((await withdrawSubmission(db, 999_999, actor).catch((e: unknown) => e)) as AppError).code).toBe("not_found");
    expect(await db.auditEntry.count()).toBe(before);
  });
});
