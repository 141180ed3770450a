import { afterAll, describe, expect, it } from "vitest";
import { Prisma } from "@/lib/db/generated/sqlite/client";
import type { Db } from "@/lib/db/client";
import { CHECKSUM_TABLES, networkChecksum } from "@/lib/db/network-checksum";
import { writeSubmission } from "@/lib/submissions/write-submission";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";

const providers = await testProviders();
const databases: TestDatabase[] = [];
afterAll(async () => {
  for (const database of databases) await database.drop();
});

async function freshDatabase(provider: (typeof providers)[number]): Promise<Db> {
  const database = await createTestDatabase(provider);
  databases.push(database);
  return database.db;
}

const broods = [
  { year: 2011, femaleId: "F-1", layDateDoy: 110, clutchSize: 9, hatchDateDoy: 131, fledglings: 7, recruits: 1 },
  { year: 2011, femaleId: "F-2", layDateDoy: 114, clutchSize: 8, hatchDateDoy: null, fledglings: 0, recruits: 0 },
  { year: 2012, femaleId: "F-1", layDateDoy: 108, clutchSize: 10, hatchDateDoy: 130, fledglings: 9, recruits: 2 },
];

/** A small network: two sites, users, moderators, a brood-record submission superseded once. */
async function fill(db: Db, order: "forward" | "reverse"): Promise<void> {
  const flip = <T>(items: T[]) => (order === "forward" ? items : [...items].reverse());
  for (const user of flip([
    { email: "a@example.org", displayName: "A", role: "coordinator" as const },
    { email: "b@example.org", displayName: "B", role: "site_lead" as const },
  ])) {
    await db.user.create({ data: user });
  }
  const species = await db.species.create({ data: { scientificName: "Parus major", commonName: "Great tit" } });
  const lead = await db.user.findUniqueOrThrow({ where: { email: "b@example.org" } });
  for (const code of flip(["ONE", "TWO"])) {
    await db.site.create({
      data: { code, name: `Site ${code}`, speciesId: species.id, latitude: 55.5, longitude: 12.25, firstYear: 2011, lastYear: 2012, leadUserId: lead.id },
    });
  }
  const moderator = await db.moderator.create({ data: { key: "warming_rate", label: "Warming", kind: "numeric", description: "trend" } });
  for (const code of flip(["ONE", "TWO"])) {
    const site = await db.site.findUniqueOrThrow({ where: { code } });
    await db.moderatorValue.create({ data: { moderatorId: moderator.id, siteId: site.id, numericValue: code === "ONE" ? 0.3 : 0.1 } });
  }
  // A first file, then a corrected one that supersedes it (both kept).
  await writeSubmission(db, { siteCode: "ONE", kind: "brood_records", fileName: "one.csv", sha256: "a".repeat(64), rows: flip(broods.slice(0, 2)), submittedById: lead.id });
  await writeSubmission(db, { siteCode: "ONE", kind: "brood_records", fileName: "one-v2.csv", sha256: "b".repeat(64), rows: flip(broods), submittedById: lead.id });
  await db.networkSetting.create({ data: { key: "demo_network", value: "true" } });
}

describe("the network checksum", () => {
  it("covers every table of the data model", () => {
    expect([...CHECKSUM_TABLES].sort()).toEqual(Object.values(Prisma.ModelName).sort());
  });
});

describe.each(providers)("the network checksum on %s", (provider) => {
  it("does not depend on the order rows were written in, nor on their ids or timestamps", async () => {
    const first = await freshDatabase(provider);
    const second = await freshDatabase(provider);
    // Different autoincrement ids in the second database: burn some first.
    await second.species.create({ data: { scientificName: "Burn idus", commonName: "burn" } });
    await second.species.deleteMany();
    await fill(first, "forward");
    await new Promise((resolve) => setTimeout(resolve, 20));
    await fill(second, "reverse");
    const a = await networkChecksum(first);
    const b = await networkChecksum(second);
    expect(b).toEqual(a);
    expect(a.sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(a.tables.BroodRecord!.rows).toBe(2 + 3);
    expect(a.tables.Submission!.rows).toBe(2);
  });

  it("changes when one value changes, in that table only", async () => {
    const db = await freshDatabase(provider);
    await fill(db, "forward");
    const before = await networkChecksum(db);
    await db.broodRecord.updateMany({ where: { femaleId: "F-2" }, data: { clutchSize: 7 } });
    const after = await networkChecksum(db);
    expect(after.sha256).not.toBe(before.sha256);
    const changed = CHECKSUM_TABLES.filter((name) => after.tables[name]!.sha256 !== before.tables[name]!.sha256);
    expect(changed).toEqual(["BroodRecord"]);
  });

  it("tells a superseded submission from the current one", async () => {
    const db = await freshDatabase(provider);
    await fill(db, "forward");
    const before = await networkChecksum(db);
    await db.submission.updateMany({ where: { status: "superseded" }, data: { status: "accepted" } });
    expect((await networkChecksum(db)).tables.Submission!.sha256).not.toBe(before.tables.Submission!.sha256);
  });

  it("is the same for every empty database", async () => {
    const a = await networkChecksum(await freshDatabase(provider));
    const b = await networkChecksum(await freshDatabase(provider));
    expect(a).toEqual(b);
    expect(Object.values(a.tables).every((t) => t.rows === 0)).toBe(true);
  });
});

describe.runIf(providers.includes("postgresql"))("the network checksum across engines", () => {
  it("is the same on SQLite and PostgreSQL for the same content", async () => {
    const sqlite = await freshDatabase("sqlite");
    const postgres = await freshDatabase("postgresql");
    await fill(sqlite, "forward");
    await fill(postgres, "reverse");
    expect(await networkChecksum(postgres)).toEqual(await networkChecksum(sqlite));
  });
});
