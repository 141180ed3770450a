import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { backupDatabase, restoreDatabase } from "@/lib/ops/backup";
import { createDb, type Db } from "@/lib/db/client";
import { createTestDatabase, testProviders } from "@/test/helpers/test-databases";

const providers = await testProviders();
const scratch = mkdtempSync(join(tmpdir(), "phenopool-backup-"));
afterAll(() => rmSync(scratch, { recursive: true, force: true }));

/** Every row of every table, ids and timestamps included, in a stable order. */
async function dumpAllTables(db: Db, provider: string): Promise<Record<string, unknown[]>> {
  const tables =
    provider === "sqlite"
      ? ((await db.$queryRawUnsafe(`SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name`)) as { name: string }[])
      : ((await db.$queryRawUnsafe(`SELECT tablename AS name FROM pg_tables WHERE schemaname = 'public' ORDER BY tablename`)) as { name: string }[]);
  const out: Record<string, unknown[]> = {};
  for (const { name } of tables) out[name] = (await db.$queryRawUnsafe(`SELECT * FROM "${name}" ORDER BY 1`)) as unknown[];
  return out;
}

async function populate(db: Db): Promise<void> {
  const user = await db.user.create({ data: { email: "a@example.org", displayName: "A", role: "coordinator" } });
  const species = await db.species.create({ data: { scientificName: "Parus major", commonName: "Great tit" } });
  const site = await db.site.create({ data: { code: "BKP", name: "Backup Wood", speciesId: species.id, latitude: 55.5, longitude: 12.25, firstYear: 2001, lastYear: 2003, leadUserId: user.id } });
  const submission = await db.submission.create({ data: { siteId: site.id, kind: "brood_records", fileName: "b.csv", sha256: "f".repeat(64), rowCount: 30 } });
  await db.broodRecord.createMany({
    data: Array.from({ length: 30 }, (_, i) => ({ siteId: site.id, year: 2001 + (i % 3), femaleId: `F${i}`, layDateDoy: 100 + i, clutchSize: 9, fledglings: i % 9, recruits: i % 2, submissionId: submission.id })),
  });
  await db.auditEntry.create({ data: { actorUserId: user.id, actorLabel: "A", action: "test", entityType: "Site", entityId: String(site.id), summary: "{}" } });
}

describe.each(providers)("backup and restore on %s", (provider) => {
  it("round-trips a populated network: every table equal after restore into an emptied database", async () => {
    const source = await createTestDatabase(provider);
    const target = await createTestDatabase(provider);
    try {
      await populate(source.db);
      const file = join(scratch, `backup-${provider}.bin`);
      const report = await backupDatabase(source.url, file);
      expect(report.bytes).toBeGreaterThan(0);
      // The snapshot is what was there when it was taken: later writes do not leak into it.
      await source.db.species.create({ data: { scientificName: "Ficedula hypoleuca", commonName: "Pied flycatcher" } });
      await target.db.$disconnect();
      await restoreDatabase(target.url, file);
      const restored = createDb(target.url);
      try {
        const expected = await dumpAllTables(source.db, provider);
        (expected.Species as unknown[]).pop();
        expect(await dumpAllTables(restored, provider)).toEqual(expected);
        expect(await restored.species.count()).toBe(1);
        expect(await restored.broodRecord.count()).toBe(30);
      } finally {
        await restored.$disconnect();
      }
    } finally {
      await source.drop();
      await target.drop();
    }
  });

  it("refuses a missing backup file and leaves the database alone", async () => {
    const database = await createTestDatabase(provider);
    try {
      await populate(database.db);
      await expect(restoreDatabase(database.url, join(scratch, "no-such-file"))).rejects.toThrow(/no backup file/);
      expect(await database.db.broodRecord.count()).toBe(30);
    } finally {
      await database.drop();
    }
  });
});
