import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { PrismaBetterSqlite3 } from "@prisma/adapter-better-sqlite3";
import pg from "pg";
import { apiRoutes } from "@/lib/api/routes";
import type { Actor } from "@/lib/auth/actor";
import { getDb, type Db } from "@/lib/db/client";
import { PrismaClient as SqliteClient } from "@/lib/db/generated/sqlite/client";
import { sqlitePath } from "@/lib/db/provider";
import { createDb } from "@/lib/db/client";
import { toAppError } from "@/lib/errors/app-error";
import { STORAGE_FAILURE_MESSAGES, storageFailureOf } from "@/lib/errors/storage-failure";
import { uploadSourceFromBytes } from "@/lib/ingest/upload-source";
import { acceptUpload } from "@/lib/submissions/accept-upload";
import { writeSubmission } from "@/lib/submissions/write-submission";
import { callRoute, signInTestCoordinator } from "@/test/api/call-route";
import { databaseProblems, tableSnapshot } from "@/test/helpers/database-consistency";
import { createTestDatabase, testProviders, TEST_PG_ADMIN_URL, type TestDatabase } from "@/test/helpers/test-databases";

/**
 * A database that cannot store a write (its disk is full, or it is read-only) refuses the write
 * with a message that says so and that nothing was written (HTTP 503 storage_unavailable), and
 * every table is left exactly as it was. A full disk is simulated with SQLite's
 * PRAGMA max_page_count on the server's write connection (sqlite.org/pragma.html#pragma_max_page_count);
 * a read-only database with PRAGMA query_only, with a connection opened read-only
 * (SQLITE_OPEN_READONLY), and on PostgreSQL with default_transaction_read_only. PostgreSQL's own
 * disk-full error (SQLSTATE 53100) cannot be produced here without a small file system; its
 * recognition is checked on the error shape the pg driver reports.
 */
const providers = await testProviders();

function broodCsv(prefix: string, rows: number): string {
  const lines = ["female,year,lay date,clutch size,hatch date,fledged,recruits"];
  for (let i = 0; i < rows; i++) lines.push(`${prefix}-${i},${2001 + (i % 5)},${100 + (i % 40)},8,,${i % 8},${i % 8 > 2 ? 1 : 0}`);
  return `${lines.join("\n")}\n`;
}

function uploadForm(csv: string, fileName: string): FormData {
  const form = new FormData();
  form.set("file", new File([csv], fileName, { type: "text/csv" }));
  form.set("siteCode", "FUL");
  form.set("kind", "brood_records");
  return form;
}

describe.each(providers)("a full or read-only database on %s", (provider) => {
  let database: TestDatabase;
  let actor: Actor;
  beforeAll(async () => {
    database = await createTestDatabase(provider);
    process.env.DATABASE_URL = database.url;
    const { db } = database;
    const { userId } = await signInTestCoordinator(db);
    actor = { kind: "user", userId, role: "coordinator", label: "coordinator", siteIds: [], via: "session" };
    const species = await db.species.create({ data: { scientificName: "Parus major", commonName: "Great tit" } });
    await db.site.create({ data: { code: "FUL", name: "Fullwood", speciesId: species.id, latitude: 52, longitude: 5, firstYear: 2001, lastYear: 2005 } });
    await writeSubmission(db, {
      siteCode: "FUL",
      kind: "brood_records",
      fileName: "first.csv",
      sha256: "a".repeat(64),
      rows: [{ year: 2001, femaleId: "F-1", layDateDoy: 110, clutchSize: 8, hatchDateDoy: null, fledglings: 6, recruits: 1 }],
    });
  });
  afterAll(async () => {
    await getDb().$disconnect();
    await database.drop();
  });

  it.runIf(provider === "sqlite")("refuses an upload that fills the disk, saying so, and leaves every table as it was", async () => {
    const db = getDb();
    const before = await tableSnapshot(db, provider);
    const [{ page_count: pages }] = (await db.$queryRawUnsafe(`PRAGMA page_count`)) as { page_count: bigint }[];
    await db.$executeRawUnsafe(`PRAGMA max_page_count = ${Number(pages) + 4}`);
    try {
      const csv = broodCsv("BIG", 20_000);
      const refused = await callRoute(apiRoutes.createSubmission, { form: uploadForm(csv, "big.csv") });
      expect(refused.status).toBe(503);
      expect(refused.body.error.code).toBe("storage_unavailable");
      expect(refused.body.error.message).toBe(STORAGE_FAILURE_MESSAGES.full);
      expect(refused.body.error.message).toMatch(/disk is full.*nothing was written/);
      const json = await callRoute(apiRoutes.createSubmission, {
        json: { siteCode: "FUL", kind: "brood_records", rows: Array.from({ length: 5_000 }, (_, i) => ({ year: 2002, femaleId: `J-${i}`, layDateDoy: 120, clutchSize: 7, fledglings: 3, recruits: 0 })) },
      });
      expect(json.status).toBe(503);
      expect(json.body.error.message).toBe(STORAGE_FAILURE_MESSAGES.full);
      expect(await tableSnapshot(db, provider)).toEqual(before);
      expect(await databaseProblems(db, provider)).toEqual([]);
    } finally {
      await db.$executeRawUnsafe(`PRAGMA max_page_count = 1073741823`);
    }
    // With room again, the same file is accepted: the refusal was the disk's, not the file's.
    const accepted = await callRoute(apiRoutes.createSubmission, { form: uploadForm(broodCsv("BIG", 20_000), "big.csv") });
    expect(accepted.status).toBe(201);
    expect(accepted.body.submission.rowCount).toBe(20_000);
  });

  it.runIf(provider === "sqlite")("refuses writes to a read-only database, saying so, and leaves every table as it was", async () => {
    const db = getDb();
    const before = await tableSnapshot(db, provider);
    await db.$executeRawUnsafe(`PRAGMA query_only = ON`);
    try {
      const refused = await callRoute(apiRoutes.createSubmission, { form: uploadForm(broodCsv("RO", 300), "read-only.csv") });
      expect(refused.status).toBe(503);
      expect(refused.body.error).toMatchObject({ code: "storage_unavailable", message: STORAGE_FAILURE_MESSAGES.read_only });
      expect(refused.body.error.message).toMatch(/read-only.*nothing was written/);
      // Reading still works.
      expect((await callRoute(apiRoutes.listSubmissions)).status).toBe(200);
    } finally {
      await db.$executeRawUnsafe(`PRAGMA query_only = OFF`);
    }
    expect(await tableSnapshot(db, provider)).toEqual(before);

    // The file itself opened read-only (as when its permissions or its disk forbid writing).
    const readOnly = new SqliteClient({ adapter: new PrismaBetterSqlite3({ url: sqlitePath(database.url), readonly: true }) }) as Db;
    try {
      const error = await acceptUpload(readOnly, uploadSourceFromBytes("ro-file.csv", broodCsv("ROF", 300)), { siteCode: "FUL", kind: "brood_records" }, actor).then(
        () => null,
        (e: unknown) => e,
      );
      expect(storageFailureOf(error)).toBe("read_only");
      expect(toAppError(error)).toMatchObject({ code: "storage_unavailable", message: STORAGE_FAILURE_MESSAGES.read_only });
      expect(await readOnly.site.count()).toBe(1);
    } finally {
      await readOnly.$disconnect();
    }
    expect(await tableSnapshot(db, provider)).toEqual(before);
  });

  it.runIf(provider === "postgresql")("refuses writes to a read-only database, saying so, and leaves every table as it was", async () => {
    const name = new URL(database.url).pathname.slice(1);
    const admin = new pg.Client({ connectionString: TEST_PG_ADMIN_URL });
    await admin.connect();
    const before = await tableSnapshot(database.db, provider);
    await admin.query(`ALTER DATABASE "${name}" SET default_transaction_read_only = on`);
    const readOnly = createDb(database.url);
    try {
      const error = await acceptUpload(readOnly, uploadSourceFromBytes("ro.csv", broodCsv("RO", 300)), { siteCode: "FUL", kind: "brood_records" }, actor).then(
        () => null,
        (e: unknown) => e,
      );
      expect(storageFailureOf(error)).toBe("read_only");
      expect(toAppError(error)).toMatchObject({ code: "storage_unavailable", message: STORAGE_FAILURE_MESSAGES.read_only });
    } finally {
      await readOnly.$disconnect();
      await admin.query(`ALTER DATABASE "${name}" RESET default_transaction_read_only`);
      await admin.end();
    }
    expect(await tableSnapshot(database.db, provider)).toEqual(before);
  });
});

describe("recognising storage failures", () => {
  it("tells a full disk and a read-only database from other errors, in every shape the drivers report them", () => {
    // Prisma's driver-adapter error, as SQLite reports a full database (seen in the tests above).
    const prismaFull = Object.assign(new Error("Raw query failed"), { code: "P2010", meta: { driverAdapterError: { cause: { originalCode: "SQLITE_FULL", kind: "sqlite" } } } });
    expect(storageFailureOf(prismaFull)).toBe("full");
    // better-sqlite3's own error, extended read-only codes (sqlite.org/rescode.html).
    expect(storageFailureOf(Object.assign(new Error("attempt to write a readonly database"), { code: "SQLITE_READONLY_DBMOVED" }))).toBe("read_only");
    // PostgreSQL SQLSTATEs (PostgreSQL documentation, appendix A): 53100 disk_full, 25006 read_only_sql_transaction.
    expect(storageFailureOf({ cause: { code: "53100", message: "could not extend file: No space left on device" } })).toBe("full");
    expect(storageFailureOf(Object.assign(new Error("cannot execute INSERT in a read-only transaction"), { code: "25006" }))).toBe("read_only");
    // The operating system's errno names.
    expect(storageFailureOf(Object.assign(new Error("write failed"), { code: "ENOSPC" }))).toBe("full");
    expect(storageFailureOf(Object.assign(new Error("write failed"), { code: "EROFS" }))).toBe("read_only");
    // Anything else is not a storage failure.
    for (const other of [new Error("unique constraint failed"), Object.assign(new Error("busy"), { code: "SQLITE_BUSY" }), null, "text", 42]) {
      expect(storageFailureOf(other)).toBeNull();
    }
    expect(toAppError(new Error("something else")).code).toBe("internal");
  });
});
