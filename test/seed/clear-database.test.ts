import { afterAll, describe, expect, it } from "vitest";
import { CHECKSUM_TABLES, networkChecksum } from "@/lib/db/network-checksum";
import { writeSubmission } from "@/lib/submissions/write-submission";
import { clearDatabase } from "@/seed/load/clear-database";
import { loadNetwork } from "@/seed/load";
import { simulateNetwork } from "@/seed/simulate";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";

const providers = await testProviders();
const databases: TestDatabase[] = [];
afterAll(async () => {
  for (const database of databases) await database.drop();
});

describe.each(providers)("clearing the database on %s", (provider) => {
  it("deletes every row of every table, whatever refers to what", async () => {
    const database = await createTestDatabase(provider);
    databases.push(database);
    const { db } = database;
    await loadNetwork(db, simulateNetwork({ seed: 4, siteCodes: ["ORL", "SLQ"] }));
    // Rows the demo does not write: a superseding upload, accounts' sessions, the audit trail, jobs...
    const site = await db.site.findUniqueOrThrow({ where: { code: "ORL" } });
    const user = await db.user.findFirstOrThrow({ where: { role: "coordinator" } });
    await writeSubmission(db, {
      siteCode: "ORL",
      kind: "brood_records",
      fileName: "again.csv",
      sha256: "c".repeat(64),
      rows: [{ year: 2020, femaleId: "X", layDateDoy: 120, clutchSize: 8, hatchDateDoy: null, fledglings: 5, recruits: 0 }],
    });
    await db.session.create({ data: { tokenHash: "s".repeat(64), userId: user.id, expiresAt: new Date(Date.now() + 3_600_000) } });
    await db.apiToken.create({ data: { userId: user.id, name: "script", tokenHash: "t".repeat(64), prefix: "pp_" } });
    await db.signInAttempt.create({ data: { email: user.email, address: "127.0.0.1", succeeded: true } });
    await db.auditEntry.create({ data: { actorUserId: user.id, actorLabel: "A", action: "test", entityType: "Site", entityId: String(site.id), summary: "{}" } });
    const analysis = await db.analysis.create({ data: { name: "pooled", specification: "{}", createdById: user.id } });
    await db.analysisRun.create({ data: { analysisId: analysis.id, dataFingerprint: "f", result: "{}", engineVersion: "1" } });
    await db.columnMapping.create({ data: { siteId: site.id, kind: "brood_records", mapping: "{}" } });
    await db.job.create({ data: { kind: "recompute", payload: "{}", siteId: site.id } });
    const before = await networkChecksum(db);
    // Every table holds something before.
    expect(CHECKSUM_TABLES.filter((name) => before.tables[name]!.rows === 0)).toEqual([]);

    await clearDatabase(db);
    const after = await networkChecksum(db);
    expect(CHECKSUM_TABLES.filter((name) => after.tables[name]!.rows > 0)).toEqual([]);
  });
});
