import { spawn } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { sqlitePath } from "@/lib/db/provider";
import { createTestDatabase, type TestDatabase } from "@/test/helpers/test-databases";

/**
 * The server's SQLite client (lib/db/sqlite-connections.ts): a query sent while another request's
 * transaction is open neither sees that transaction's uncommitted rows nor is undone by its
 * rollback; writes that must wait for the write connection, or for another process's lock, wait
 * and then succeed. (SQLite's isolation rules: "Isolation In SQLite", sqlite.org/isolation.html;
 * WAL readers see the last commit: sqlite.org/wal.html.)
 */
describe("SQLite client: one writing and one reading connection", () => {
  let database: TestDatabase;
  beforeAll(async () => {
    database = await createTestDatabase("sqlite");
  });
  afterAll(async () => {
    await database.drop();
  });
  const pause = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

  it("keeps a transaction's uncommitted rows from other readers and keeps others' writes when it rolls back", async () => {
    const { db } = database;
    let seenDuring = -1;
    let outsideWriteDone = false;
    const rolledBack = db
      .$transaction(async (tx) => {
        await tx.species.create({ data: { scientificName: "Uncommitted one", commonName: "u" } });
        await pause(200);
        // The write below was sent while this transaction was open: it waits for it.
        expect(outsideWriteDone).toBe(false);
        throw new Error("abandon the transaction");
      })
      .catch((error: Error) => error.message);
    await pause(50);
    seenDuring = await db.species.count({ where: { scientificName: "Uncommitted one" } });
    const outsideWrite = db.species.create({ data: { scientificName: "Written beside it", commonName: "w" } }).then(() => (outsideWriteDone = true));
    expect(await rolledBack).toBe("abandon the transaction");
    await outsideWrite;
    expect(seenDuring).toBe(0);
    expect((await db.species.findMany({ where: { scientificName: { in: ["Uncommitted one", "Written beside it"] } } })).map((s) => s.scientificName)).toEqual([
      "Written beside it",
    ]);
  });

  it("lands every one of many concurrent writes and transactions, and only the committed ones", async () => {
    const { db } = database;
    const before = await db.species.count();
    const writes = Array.from({ length: 60 }, (_, i) => db.species.create({ data: { scientificName: `Concurrent ${i}`, commonName: "c" } }));
    const transactions = Array.from({ length: 20 }, (_, i) =>
      db
        .$transaction(async (tx) => {
          await tx.species.create({ data: { scientificName: `In transaction ${i}`, commonName: "t" } });
          await pause(5);
          if (i % 4 === 0) throw new Error("rolled back");
        })
        .then(
          () => "committed",
          () => "rolled back",
        ),
    );
    const outcomes = await Promise.all(transactions);
    await Promise.all(writes);
    expect(outcomes.filter((o) => o === "rolled back")).toHaveLength(5);
    expect(await db.species.count()).toBe(before + 60 + 15);
    expect(await db.species.count({ where: { scientificName: { startsWith: "In transaction" } } })).toBe(15);
  });

  it("frees the write connection after a write the database refuses (a full database), so later writes go through", async () => {
    const { db } = database;
    const [{ page_count: pages }] = (await db.$queryRawUnsafe(`PRAGMA page_count`)) as { page_count: bigint }[];
    await db.$executeRawUnsafe(`PRAGMA max_page_count = ${Number(pages) + 1}`);
    const big = "x".repeat(3000);
    const refused = await db
      .$transaction(async (tx) => {
        for (let i = 0; i < 50; i++) await tx.species.create({ data: { scientificName: `Too much ${i} ${big}`, commonName: big } });
      })
      .then(
        () => null,
        (error: Error) => error.message,
      );
    expect(refused).toMatch(/SQLITE_FULL|database or disk is full/);
    expect(await db.species.count({ where: { scientificName: { startsWith: "Too much" } } })).toBe(0);
    await db.$executeRawUnsafe(`PRAGMA max_page_count = 1073741823`);
    await db.species.create({ data: { scientificName: "After the refusal", commonName: "a" } });
    expect(await db.species.count({ where: { scientificName: "After the refusal" } })).toBe(1);
  });

  it("waits for another process's write lock (busy timeout) instead of failing", async () => {
    const { db } = database;
    const path = sqlitePath(database.url);
    // Another process takes the write lock, holds it for 1.5 s, then commits its own row.
    const holder = spawn(
      process.execPath,
      [
        "-e",
        `const D = require("better-sqlite3"); const db = new D(${JSON.stringify(path)}); db.exec("BEGIN IMMEDIATE");
         db.prepare("INSERT INTO \\"Species\\" (\\"scientificName\\", \\"commonName\\") VALUES ('Other process', 'o')").run();
         process.stdout.write("locked\\n"); Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, 1500); db.exec("COMMIT");`,
      ],
      { stdio: ["ignore", "pipe", "inherit"] },
    );
    await new Promise<void>((resolve) => holder.stdout!.once("data", () => resolve()));
    const started = performance.now();
    await db.species.create({ data: { scientificName: "Waited for the lock", commonName: "w" } });
    const waited = performance.now() - started;
    await new Promise((resolve) => holder.once("close", resolve));
    expect(waited).toBeGreaterThan(500);
    expect(await db.species.count({ where: { scientificName: { in: ["Other process", "Waited for the lock"] } } })).toBe(2);
  });
});
