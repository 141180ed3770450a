import { spawn } from "node:child_process";
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { backupDatabase, restoreDatabase } from "@/lib/ops/backup";
import { createDb, type Db } from "@/lib/db/client";
import { databaseProblems, tableSnapshot } from "@/test/helpers/database-consistency";
import { createTestDatabase, testProviders } from "@/test/helpers/test-databases";

const providers = await testProviders();
const scratch = mkdtempSync(join(tmpdir(), "phenopool-backup-"));
afterAll(() => rmSync(scratch, { recursive: true, force: true }));

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
        const expected = await tableSnapshot(source.db, provider);
        (expected.Species as unknown[]).pop();
        expect(await tableSnapshot(restored, provider)).toEqual(expected);
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

  it("takes a consistent snapshot while another process keeps writing submissions, and restores it whole", async () => {
    const source = await createTestDatabase(provider);
    const target = await createTestDatabase(provider);
    const writer = spawn(process.execPath, ["--import", "tsx", "test/helpers/submission-writer-process.ts", source.url, "BKP"], { stdio: ["pipe", "pipe", "inherit"] });
    try {
      await populate(source.db);
      // Many more rows (a file of ~15 MB), so copying it takes long enough for the writer to commit
      // many times meanwhile. (SQLite's online backup API starts again after every such commit.)
      const site = await source.db.site.findUniqueOrThrow({ where: { code: "BKP" } });
      const bulk = await source.db.submission.create({ data: { siteId: site.id, kind: "brood_records", fileName: "bulk.csv", sha256: "e".repeat(64), rowCount: 200_000, status: "superseded" } });
      await source.db.$executeRawUnsafe(
        `INSERT INTO "BroodRecord" ("siteId", "year", "femaleId", "layDateDoy", "clutchSize", "fledglings", "recruits", "submissionId")
         WITH RECURSIVE n(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM n WHERE i < 200000)
         SELECT ${site.id}, 2001, 'B' || i, 110, 9, 5, 1, ${bulk.id} FROM n`,
      );
      let written = 0;
      const progress: Array<() => void> = [];
      writer.stdout!.on("data", (chunk: Buffer) => {
        written += (chunk.toString().match(/wrote/g) ?? []).length;
        progress.splice(0).forEach((wake) => wake());
      });
      const writtenAtLeast = async (n: number) => {
        while (written < n) await new Promise<void>((resolve) => progress.push(resolve));
      };
      await writtenAtLeast(3);
      const file = join(scratch, `under-writes-${provider}.bin`);
      const before = written;
      const finished = await Promise.race([
        backupDatabase(source.url, file).then(() => "finished"),
        new Promise((resolve) => setTimeout(() => resolve("still copying after 30 s"), 30_000).unref()),
      ]);
      expect(finished).toBe("finished");
      await writtenAtLeast(before + 3);
      writer.stdin!.end();
      await new Promise((resolve) => writer.once("close", resolve));
      await target.db.$disconnect();
      await restoreDatabase(target.url, file);
      const restored = createDb(target.url);
      try {
        // Every submission in the snapshot holds all its rows: no write was caught half-way.
        expect(await databaseProblems(restored, provider)).toEqual([]);
        const inSnapshot = await restored.submission.count({ where: { fileName: { startsWith: "writer-" } } });
        expect(inSnapshot).toBeGreaterThanOrEqual(before - 1);
        expect(inSnapshot).toBeLessThan(await source.db.submission.count({ where: { fileName: { startsWith: "writer-" } } }));
        expect(await restored.broodRecord.count({ where: { submission: { fileName: { startsWith: "writer-" } } } })).toBe(inSnapshot * 20);
      } finally {
        await restored.$disconnect();
      }
    } finally {
      if (writer.exitCode === null) writer.kill("SIGKILL");
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
