import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { BROOD_RECORD_RULES, rowSnapshot } from "@/lib/ingest/submission-kind-rules";
import { diffStoredSubmissions, loadStoredSnapshots } from "@/lib/submissions/submission-diff";
import { writeSubmission } from "@/lib/submissions/write-submission";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";

const providers = await testProviders();

const brood = (femaleId: string, year: number, fledglings: number, hatchDateDoy: number | null) => ({
  year,
  femaleId,
  layDateDoy: 101,
  clutchSize: 9,
  hatchDateDoy,
  fledglings,
  recruits: Math.min(1, fledglings),
});

describe.each(providers)("comparing stored versions on %s", (provider) => {
  let database: TestDatabase;
  beforeAll(async () => {
    database = await createTestDatabase(provider);
    const species = await database.db.species.create({ data: { scientificName: "Cyanistes caeruleus", commonName: "Blue tit" } });
    await database.db.site.create({ data: { code: "ASH", name: "Ash", speciesId: species.id, latitude: 51, longitude: -1, firstYear: 2000, lastYear: 2020 } });
  });
  afterAll(async () => {
    await database.drop();
  });

  it("reads stored brood records as the very keys and snapshots the rules make from rows", async () => {
    const rows = [brood("F-1", 2011, 7, null), brood("ring 22, left", 2011, 0, 118), brood("Fé-ø \"x\"", 2012, 9, 120)];
    const written = await writeSubmission(database.db, { siteCode: "ASH", kind: "brood_records", fileName: "a.csv", sha256: "a".repeat(64), rows });
    const stored = await loadStoredSnapshots(database.db, "brood_records", written.submissionId);
    expect([...stored].sort()).toEqual(rows.map((r) => [BROOD_RECORD_RULES.keyOf(r), rowSnapshot(BROOD_RECORD_RULES, r)]).sort());
  });

  it("diffs two stored submissions on their natural keys", async () => {
    const older = await writeSubmission(database.db, {
      siteCode: "ASH",
      kind: "brood_records",
      fileName: "b.csv",
      sha256: "b".repeat(64),
      rows: [brood("F-1", 2011, 7, null), brood("F-2", 2011, 5, null)],
    });
    const newer = await writeSubmission(database.db, {
      siteCode: "ASH",
      kind: "brood_records",
      fileName: "c.csv",
      sha256: "c".repeat(64),
      rows: [brood("F-1", 2011, 6, 119), brood("F-3", 2012, 5, null)],
    });
    expect(await diffStoredSubmissions(database.db, "brood_records", older.submissionId, newer.submissionId)).toEqual({
      againstSubmissionId: older.submissionId,
      added: 1,
      changed: 1,
      removed: 1,
      unchanged: 0,
      examples: {
        added: [{ key: "female F-3 in 2012" }],
        changed: [
          {
            key: "female F-1 in 2011",
            changes: [
              { field: "hatchDateDoy", from: null, to: 119 },
              { field: "fledglings", from: 7, to: 6 },
            ],
          },
        ],
        removed: [{ key: "female F-2 in 2011" }],
      },
    });
  });
});
