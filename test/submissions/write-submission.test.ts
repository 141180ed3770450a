import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { writeSubmission } from "@/lib/submissions/write-submission";
import { AppError } from "@/lib/errors/app-error";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";

const providers = await testProviders();

const goodRow = (femaleId: string, year = 2010) => ({
  year,
  femaleId,
  layDateDoy: 105,
  clutchSize: 9,
  hatchDateDoy: null,
  fledglings: 7,
  recruits: 1,
});

async function counts(database: TestDatabase) {
  const { db } = database;
  return { submissions: await db.submission.count(), broods: await db.broodRecord.count() };
}

describe.each(providers)("writing a submission on %s", (provider) => {
  let database: TestDatabase;
  beforeAll(async () => {
    database = await createTestDatabase(provider);
    const species = await database.db.species.create({ data: { scientificName: "Ficedula hypoleuca", commonName: "Pied flycatcher" } });
    await database.db.site.create({
      data: { code: "OAK", name: "Oak Test Plot", speciesId: species.id, latitude: 60, longitude: 10, firstYear: 2000, lastYear: 2020 },
    });
  });
  afterAll(async () => {
    await database.drop();
  });

  it("writes nothing when one row is bad, and names its row, field and reason", async () => {
    const before = await counts(database);
    const rows = [goodRow("F-1"), goodRow("F-2"), { ...goodRow("F-3"), fledglings: 12 }, goodRow("F-4")];
    const error = await writeSubmission(database.db, {
      siteCode: "OAK",
      kind: "brood_records",
      fileName: "broods.csv",
      sha256: "1".repeat(64),
      rows,
    }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(AppError);
    const appError = error as AppError;
    expect(appError.code).toBe("invalid_input");
    expect(appError.fieldErrors).toEqual([
      { row: 3, field: "fledglings", message: "fledglings 12 exceeds clutch size 9", file: "broods.csv", value: "12" },
    ]);
    expect(await counts(database)).toEqual(before);
  });

  it("reports every problem, including a female with two broods in one year", async () => {
    const rows = [goodRow("F-1"), { ...goodRow("F-2"), layDateDoy: 412 }, goodRow("F-1")];
    const error = (await writeSubmission(database.db, { siteCode: "OAK", kind: "brood_records", fileName: "b.csv", sha256: "2".repeat(64), rows }).catch(
      (e: unknown) => e,
    )) as AppError;
    expect(error.fieldErrors.map((e) => [e.row, e.field])).toEqual([
      [2, "layDateDoy"],
      [3, "femaleId"],
    ]);
    expect(error.fieldErrors[1]?.message).toBe("female F-1 has two broods in 2010 (first at row 1)");
  });

  it("refuses an unknown site code", async () => {
    await expect(
      writeSubmission(database.db, { siteCode: "XYZ", kind: "brood_records", fileName: "b.csv", sha256: "3".repeat(64), rows: [goodRow("F-1")] }),
    ).rejects.toThrow("site code XYZ is not in this network");
  });

  it("accepts a good file whole, supersedes the previous one, and recognises identical bytes", async () => {
    const first = await writeSubmission(database.db, {
      siteCode: "OAK",
      kind: "brood_records",
      fileName: "v1.csv",
      sha256: "4".repeat(64),
      rows: [goodRow("F-1"), goodRow("F-2")],
    });
    expect(first).toMatchObject({ unchanged: false, supersededId: null, rowCount: 2 });
    const second = await writeSubmission(database.db, {
      siteCode: "OAK",
      kind: "brood_records",
      fileName: "v2.csv",
      sha256: "5".repeat(64),
      rows: [goodRow("F-1"), goodRow("F-2"), goodRow("F-3")],
    });
    expect(second.supersededId).toBe(first.submissionId);
    const again = await writeSubmission(database.db, {
      siteCode: "OAK",
      kind: "brood_records",
      fileName: "v2-copy.csv",
      sha256: "5".repeat(64),
      rows: [goodRow("F-1"), goodRow("F-2"), goodRow("F-3")],
    });
    expect(again).toEqual({ submissionId: second.submissionId, supersededId: null, unchanged: true, rowCount: 3 });
    const statuses = await database.db.submission.findMany({ where: { kind: "brood_records" }, orderBy: { id: "asc" }, select: { status: true } });
    expect(statuses.map((s) => s.status)).toEqual(["superseded", "accepted"]);
    // Earlier versions are kept: both files' rows are still there.
    expect(await database.db.broodRecord.count()).toBe(5);
  });
});
