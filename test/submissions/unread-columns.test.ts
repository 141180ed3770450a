import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Actor } from "@/lib/auth/actor";
import { uploadSourceFromBytes } from "@/lib/ingest/upload-source";
import { acceptUpload } from "@/lib/submissions/accept-upload";
import { previewUpload } from "@/lib/submissions/preview-upload";
import type { UploadLimits } from "@/lib/submissions/scan-upload";
import { createTestDatabase, type TestDatabase } from "@/test/helpers/test-databases";

/**
 * A file's columns that no field reads are told in the preview (before accepting) and in the
 * result of accepting (and its audit entry), so a column PhenoPool does not recognise is never
 * dropped without the user knowing.
 */
const LIMITS: UploadLimits = { maxBytes: 1 << 20, maxRows: 10_000, maxListedProblems: 1_000 };
const actor: Actor = { kind: "user", userId: null, role: "coordinator", label: "test coordinator", siteIds: [], via: "none" };
const withHatchingDay = "female,year,lay date,clutch size,hatching day,fledged,recruits\nH-1,2012,118,8,133,6,1\nH-2,2012,121,7,,5,0\n";

describe("columns no field reads, in previews and accepted uploads", () => {
  let database: TestDatabase;
  beforeAll(async () => {
    database = await createTestDatabase("sqlite");
    const species = await database.db.species.create({ data: { scientificName: "Ficedula hypoleuca", commonName: "Pied flycatcher" } });
    for (const code of ["HAT", "GAP"]) {
      await database.db.site.create({ data: { code, name: `${code} wood`, speciesId: species.id, latitude: 60, longitude: 10, firstYear: 2000, lastYear: 2020 } });
    }
  });
  afterAll(async () => {
    await database.drop();
  });

  it("are listed in the preview, which stays acceptable, and disappear once mapped", async () => {
    const preview = await previewUpload(database.db, uploadSourceFromBytes("hatch.csv", withHatchingDay), { siteCode: "HAT", kind: "brood_records" }, LIMITS);
    expect(preview.acceptable).toBe(true);
    expect(preview.unusedHeadings).toEqual(["hatching day"]);
    expect(preview.warnings.map((w) => w.code)).toEqual(["unused_columns"]);
    expect(preview.warnings[0]!.message).toMatch(/^the column "hatching day" was not read/);
    expect(preview.previewRows.map((r) => r.values.hatchDateDoy)).toEqual([null, null]);
    const mapped = await previewUpload(database.db, uploadSourceFromBytes("hatch.csv", withHatchingDay), { siteCode: "HAT", kind: "brood_records", mapping: { hatchDate: "hatching day" } }, LIMITS);
    expect(mapped).toMatchObject({ unusedHeadings: [], warnings: [] });
    expect(mapped.previewRows.map((r) => r.values.hatchDateDoy)).toEqual([133, null]);
  });

  it("are named in the result of accepting and in its audit entry", async () => {
    const accepted = await acceptUpload(database.db, uploadSourceFromBytes("hatch.csv", withHatchingDay), { siteCode: "HAT", kind: "brood_records" }, actor, LIMITS);
    expect(accepted).toMatchObject({ unchanged: false, rowCount: 2, unusedHeadings: ["hatching day"] });
    expect(accepted.warnings[0]!.message).toMatch(/"hatching day" was not read/);
    const audit = await database.db.auditEntry.findFirstOrThrow({ where: { action: "submission.upload", entityId: String(accepted.submissionId) } });
    expect(JSON.parse(audit.summary).after).toMatchObject({ fileName: "hatch.csv", unusedHeadings: ["hatching day"] });
    // Sending the same bytes again writes nothing, and still says what was not read.
    const again = await acceptUpload(database.db, uploadSourceFromBytes("hatch.csv", withHatchingDay), { siteCode: "HAT", kind: "brood_records" }, actor, LIMITS);
    expect(again).toMatchObject({ unchanged: true, unusedHeadings: ["hatching day"] });
  });

  it("include a column with an empty heading that holds values, counting its rows; an empty one is not mentioned", async () => {
    // Column 5 has no heading but a value in row 2; column 9 (a trailing delimiter) is empty throughout.
    const text = "female,year,lay date,clutch size,,fledged,recruits,hatch date,\nG-1,2012,118,8,,6,1,,\nG-2,2012,121,7,box 14,5,0,,\nG-3,2012,119,7,,5,0,,\n";
    const preview = await previewUpload(database.db, uploadSourceFromBytes("gap.csv", text), { siteCode: "GAP", kind: "brood_records" }, LIMITS);
    expect(preview.acceptable).toBe(true);
    expect(preview.unusedHeadings).toEqual([]);
    expect(preview.warnings).toEqual([
      { code: "unheaded_columns", message: "column 5 (values in 1 row) has no heading, so its values were not read. Give it a heading and map a field to it to have the values read." },
    ]);
  });
});
