import { readFileSync } from "node:fs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import ExcelJS from "exceljs";
import type { Actor } from "@/lib/auth/actor";
import { problemsToCsv } from "@/lib/ingest/upload-problem";
import { uploadSourceFromBytes, type UploadSource } from "@/lib/ingest/upload-source";
import { acceptUpload } from "@/lib/submissions/accept-upload";
import { previewUpload } from "@/lib/submissions/preview-upload";
import { previewRestore, restoreSubmission } from "@/lib/submissions/restore-submission";
import type { UploadLimits } from "@/lib/submissions/scan-upload";
import { expectClose } from "@/test/helpers/expect-close";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";
import { tableCounts } from "./table-counts";
import frassReference from "@/test/fixtures/r-stats/frass-upload-series.json";
import { refusal } from "@/test/helpers/app-error-refusal";

const providers = await testProviders();
const LIMITS: UploadLimits = { maxBytes: 1 << 20, maxRows: 10_000, maxListedProblems: 1_000 };
const actor: Actor = { kind: "user", userId: null, role: "coordinator", label: "test coordinator", siteIds: [], via: "none" };
const csv = (name: string, text: string) => uploadSourceFromBytes(name, text);

describe.each(providers)("uploading files on %s", (provider) => {
  let database: TestDatabase;
  const counts = () => tableCounts(database.db);

  beforeAll(async () => {
    database = await createTestDatabase(provider);
    const species = await database.db.species.create({ data: { scientificName: "Ficedula hypoleuca", commonName: "Pied flycatcher" } });
    const site = (code: string, dateConvention: "jan1" | "apr1") =>
      database.db.site.create({ data: { code, name: `${code} wood`, speciesId: species.id, latitude: 60, longitude: 10, firstYear: 2000, lastYear: 2020, dateConvention } });
    await site("OAK", "jan1");
    await site("APR", "apr1");
    await site("ELM", "jan1");
    await site("XLS", "jan1");
    await site("FRS", "jan1");
  });
  afterAll(async () => {
    await database.drop();
  });

  it("reads a semicolon CSV with decimal commas when told, and refuses it with a hint when not", async () => {
    const text = "Year;Food peak;Spring temp (C);Broods\n2011;141,5;7,25;40\n2012;135;8,5;38\n";
    const undeclared = await previewUpload(database.db, csv("years.csv", text), { siteCode: "ELM", kind: "site_year_covariates" }, LIMITS);
    expect(undeclared.acceptable).toBe(false);
    expect(undeclared.problems[0]).toMatchObject({ row: 1, line: 2, column: "Food peak", value: "141,5", reason: 'Food peak "141,5" has a decimal comma: declare that the file uses decimal commas' });
    const preview = await previewUpload(database.db, csv("years.csv", text), { siteCode: "ELM", kind: "site_year_covariates", decimalComma: true }, LIMITS);
    expect(preview.table).toMatchObject({ format: "csv", delimiter: ";", delimiterDetected: true });
    expect(preview.mapping?.mapping).toEqual({ year: "Year", foodPeakDate: "Food peak", meanSpringTempC: "Spring temp (C)", broodCount: "Broods" });
    expect(preview.previewRows).toEqual([
      { row: 1, values: { year: 2011, foodPeakDoy: 141.5, foodPeakSe: null, meanSpringTempC: 7.25, broodCount: 40 } },
      { row: 2, values: { year: 2012, foodPeakDoy: 135, foodPeakSe: null, meanSpringTempC: 8.5, broodCount: 38 } },
    ]);
    const accepted = await acceptUpload(database.db, csv("years.csv", text), { siteCode: "ELM", kind: "site_year_covariates", decimalComma: true }, actor, LIMITS);
    expect(accepted).toMatchObject({ unchanged: false, rowCount: 2, job: null });
    const stored = await database.db.siteYear.findMany({ where: { submissionId: accepted.submissionId }, orderBy: { year: "asc" } });
    expect(stored.map((r) => [r.year, r.foodPeakDoy, r.meanSpringTempC, r.broodCount])).toEqual([
      [2011, 141.5, 7.25, 40],
      [2012, 135, 8.5, 38],
    ]);
  });

  it("converts day numbers of a site that counts from 1 April, and reads ISO dates as they are", async () => {
    // Reference: Python datetime, date(2011, 4, 23) is day 113 of 2011 and April day 23
    // (test/fixtures/python-stdlib/day-of-year.json); 2012 is a leap year (1 April = day 92).
    const text = "year,female,lay date,clutch,hatch date,fledged,recruits\n2011,F-1,23,9,42,7,1\n2011,F-2,2011-04-23,8,,6,0\n2012,F-1,1,9,,5,1\n";
    const accepted = await acceptUpload(database.db, csv("april.csv", text), { siteCode: "APR", kind: "brood_records" }, actor, LIMITS);
    const stored = await database.db.broodRecord.findMany({ where: { submissionId: accepted.submissionId }, orderBy: { id: "asc" } });
    expect(stored.map((r) => [r.year, r.femaleId, r.layDateDoy, r.hatchDateDoy])).toEqual([
      [2011, "F-1", 113, 132],
      [2011, "F-2", 113, null],
      [2012, "F-1", 92, null],
    ]);
    expect(accepted.job).toMatchObject({ kind: "recompute_site_estimates", status: "queued" });
    expect(accepted.job!.siteId).toBe(stored[0]!.siteId);
    const tooLate = await previewUpload(database.db, csv("late.csv", "year,female,lay date,clutch,fledged,recruits\n2011,F-9,300,9,7,1\n"), { siteCode: "APR", kind: "brood_records" }, LIMITS);
    expect(tooLate.problems).toEqual([
      expect.objectContaining({ row: 1, column: "lay date", value: "300", reason: "lay date 300 is not a day of 2011 counted from 1 April (-89 = 1 January to 275 = 31 December)" }),
    ]);
  });

  it("writes nothing when one row is bad, and names file, row, line, the user's heading, value and reason", async () => {
    const before = await counts();
    const rows = Array.from({ length: 50 }, (_, i) => `2010,F-${i},105,9,,7,1`);
    rows[20] = "2010,F-20,105,9,,12,1";
    rows[30] = "2010,F-5,106,9,,7,1";
    rows[40] = "2010,F-40,412,9,,7,1";
    const text = `Year,Female ID,Lay_Date,Clutch size,Hatch,Fledged,Recruits\n${rows.join("\n")}\n`;
    const error = await refusal(acceptUpload(database.db, csv("broods.csv", text), { siteCode: "OAK", kind: "brood_records" }, actor, LIMITS));
    expect(error.code).toBe("invalid_input");
    expect(error.message).toBe("broods.csv: 3 problems in 3 rows; nothing was written");
    expect(error.fieldErrors).toEqual([
      { file: "broods.csv", row: 21, field: "Fledged", value: "12", message: "fledglings 12 exceeds clutch size 9" },
      { file: "broods.csv", row: 31, field: "Female ID", value: "F-5", message: "female F-5 has two broods in 2010 (first at row 6)" },
      { file: "broods.csv", row: 41, field: "Lay_Date", value: "412", message: "Lay_Date 412 is not a day of the year (1-365 in 2010)" },
    ]);
    expect(await counts()).toEqual(before);
    const preview = await previewUpload(database.db, csv("broods.csv", text), { siteCode: "OAK", kind: "brood_records" }, LIMITS);
    expect(problemsToCsv(preview.problems, preview.totals).split("\r\n").slice(0, 3)).toEqual([
      "file,row,line,column,field,value,reason",
      "broods.csv,21,22,Fledged,fledglings,12,fledglings 12 exceeds clutch size 9",
      "broods.csv,31,32,Female ID,femaleId,F-5,female F-5 has two broods in 2010 (first at row 6)",
    ]);
  });

  it("refuses a row for a site outside the network", async () => {
    const preview = await previewUpload(
      database.db,
      csv("b.csv", "site,year,female,lay date,clutch,fledged,recruits\nXYZ,2011,F-1,105,9,7,1\nELM,2011,F-2,105,9,7,1\nOAK,2011,F-3,105,9,7,1\n"),
      { siteCode: "OAK", kind: "brood_records" },
      LIMITS,
    );
    expect(preview.problems.map((p) => [p.row, p.column, p.reason])).toEqual([
      [1, "site", "site code XYZ is not in this network"],
      [2, "site", "the row is for site ELM, but the file is uploaded for site OAK"],
    ]);
  });

  it("supersedes with a diff shown first, recognises identical bytes, keeps and restores earlier versions", async () => {
    const v1 = "year,female,lay date,clutch,fledged,recruits\n2011,F-1,105,9,7,1\n2011,F-2,110,8,6,0\n2012,F-3,100,9,3,1\n";
    const v2 = "year,female,lay date,clutch,fledged,recruits\n2011,F-1,105,9,7,1\n2011,F-2,110,8,5,0\n2013,F-4,101,9,3,1\n";
    const first = await acceptUpload(database.db, csv("v1.csv", v1), { siteCode: "OAK", kind: "brood_records" }, actor, LIMITS);
    expect(first.diff).toMatchObject({ againstSubmissionId: null, added: 3, changed: 0, removed: 0 });
    const preview = await previewUpload(database.db, csv("v2.csv", v2), { siteCode: "OAK", kind: "brood_records" }, LIMITS);
    expect(preview.diff).toEqual({
      againstSubmissionId: first.submissionId,
      added: 1,
      changed: 1,
      removed: 1,
      unchanged: 1,
      examples: {
        added: [{ key: "female F-4 in 2013" }],
        changed: [{ key: "female F-2 in 2011", changes: [{ field: "fledglings", from: 6, to: 5 }] }],
        removed: [{ key: "female F-3 in 2012" }],
      },
    });
    const second = await acceptUpload(
      database.db,
      csv("v2.csv", v2),
      { siteCode: "OAK", kind: "brood_records", expectedSha256: preview.sha256!, expectedCurrentSubmissionId: first.submissionId },
      actor,
      LIMITS,
    );
    expect(second.supersededId).toBe(first.submissionId);

    const before = await counts();
    const again = await acceptUpload(database.db, csv("v2-copy.csv", v2), { siteCode: "OAK", kind: "brood_records" }, actor, LIMITS);
    expect(again).toMatchObject({ submissionId: second.submissionId, unchanged: true, job: null });
    expect(await counts()).toEqual(before);
    const sameAsOld = await previewUpload(database.db, csv("v1-again.csv", v1), { siteCode: "OAK", kind: "brood_records" }, LIMITS);
    expect(sameAsOld.sameBytes.map((s) => [s.submissionId, s.status])).toEqual([[first.submissionId, "superseded"]]);

    const restorePreview = await previewRestore(database.db, first.submissionId);
    expect(restorePreview).toMatchObject({ currentSubmissionId: second.submissionId, diff: { added: 1, changed: 1, removed: 1, unchanged: 1 } });
    const restored = await restoreSubmission(database.db, { submissionId: first.submissionId, expectedCurrentSubmissionId: second.submissionId }, actor);
    expect(restored).toMatchObject({ restoredFromId: first.submissionId, supersededId: second.submissionId, rowCount: 3 });
    expect(restored.job).toMatchObject({ kind: "recompute_site_estimates" });
    const history = await database.db.submission.findMany({ where: { site: { code: "OAK" }, kind: "brood_records" }, orderBy: { id: "asc" } });
    expect(history.map((s) => [s.id, s.status, s.supersedesId, s.sha256 === first.sha256])).toEqual([
      [first.submissionId, "superseded", null, true],
      [second.submissionId, "superseded", first.submissionId, false],
      [restored.submissionId, "accepted", second.submissionId, true],
    ]);
    const rowsOf = async (submissionId: number) =>
      (await database.db.broodRecord.findMany({ where: { submissionId }, orderBy: { id: "asc" } })).map(({ id: _id, submissionId: _s, ...row }) => row);
    expect(await rowsOf(restored.submissionId)).toEqual(await rowsOf(first.submissionId));
    const audit = await database.db.auditEntry.findFirst({ where: { action: "submission.restore" }, orderBy: { id: "desc" } });
    expect(JSON.parse(audit!.summary)).toMatchObject({ after: { restoredFromId: first.submissionId } });
    expect((await refusal(restoreSubmission(database.db, { submissionId: restored.submissionId }, actor))).code).toBe("conflict");
    // The stale preview's expectations no longer hold.
    expect(
      (await refusal(acceptUpload(database.db, csv("v2.csv", v2), { siteCode: "OAK", kind: "brood_records", expectedCurrentSubmissionId: second.submissionId }, actor, LIMITS))).code,
    ).toBe("conflict");
  });

  it("stores the same bytes again when the site's date convention makes them other rows", async () => {
    const text = "year,female,lay date,clutch,fledged,recruits\n2011,F-1,23,9,7,1\n";
    const first = await acceptUpload(database.db, csv("c.csv", text), { siteCode: "ELM", kind: "brood_records" }, actor, LIMITS);
    await database.db.site.update({ where: { code: "ELM" }, data: { dateConvention: "apr1" } });
    const second = await acceptUpload(database.db, csv("c.csv", text), { siteCode: "ELM", kind: "brood_records" }, actor, LIMITS);
    expect(second).toMatchObject({ unchanged: false, supersededId: first.submissionId, diff: { changed: 1 } });
    expect((await database.db.broodRecord.findFirst({ where: { submissionId: second.submissionId } }))!.layDateDoy).toBe(113);
    await database.db.site.update({ where: { code: "ELM" }, data: { dateConvention: "jan1" } });
  });

  it("remembers the column mapping and proposes it for headings written differently", async () => {
    const mapping = { year: "Season", femaleId: "Ring", layDate: "FED (day)", clutchSize: "CS", fledglings: "Fl", recruits: "Rec" };
    const text = "Season,Ring,FED (day),CS,Fl,Rec,Observer\n2011,F-1,105,9,7,1,AB\n";
    const unmapped = await previewUpload(database.db, csv("m.csv", text), { siteCode: "XLS", kind: "brood_records" }, LIMITS);
    expect(unmapped.mapping?.unmappedRequired).toEqual(["fledglings", "recruits"]);
    expect(unmapped.problems.every((p) => p.row === 0)).toBe(true);
    await acceptUpload(database.db, csv("m.csv", text), { siteCode: "XLS", kind: "brood_records", mapping }, actor, LIMITS);
    const next = await previewUpload(database.db, csv("m2.csv", "season,RING,fed_day,cs,FL,rec\n2012,F-1,101,9,7,1\n"), { siteCode: "XLS", kind: "brood_records" }, LIMITS);
    expect(next.acceptable).toBe(true);
    expect(next.mapping?.mapping).toEqual({ year: "season", femaleId: "RING", layDate: "fed_day", clutchSize: "cs", fledglings: "FL", recruits: "rec" });
    expect(Object.values(next.mapping!.sources)).toEqual(Array(6).fill("remembered"));
  });

  it("reads estimates from an .xlsx written by a spreadsheet library, converting variance and 95% intervals to standard errors", async () => {
    const wb = new ExcelJS.Workbook();
    wb.addWorksheet("About").addRow(["estimates of Oak wood"]);
    const sheet = wb.addWorksheet("Estimates");
    sheet.addRow(["Outcome", "Level", "Term", "Year", "Estimate", "SE", "Variance", "CI lower", "CI upper", "N", "Scale", "Link", "Method"]);
    sheet.addRow(["recruitment", "within_year", "linear", 2011, -0.04, 0.012, null, null, null, 120, "per_day", "logit", "binomial GLM"]);
    sheet.addRow(["Recruitment", "Within-year", "quadratic", 2011, -0.002, null, 0.0004, null, null, 120, "per_day", "logit", "binomial GLM"]);
    sheet.addRow(["fledging_failure", "between_year", "linear", null, 0.05, null, null, -0.01, 0.11, 14, "per_day", "logit", "weighted regression"]);
    const bytes = new Uint8Array(await wb.xlsx.writeBuffer());
    const accepted = await acceptUpload(database.db, uploadSourceFromBytes("estimates.xlsx", bytes), { siteCode: "XLS", kind: "estimates", sheet: "Estimates" }, actor, LIMITS);
    const stored = await database.db.estimate.findMany({ where: { submissionId: accepted.submissionId }, orderBy: { id: "asc" } });
    expect(stored.map((e) => [e.outcome, e.level, e.term, e.year, e.source])).toEqual([
      ["recruitment", "within_year", "linear", 2011, "uploaded"],
      ["recruitment", "within_year", "quadratic", 2011, "uploaded"],
      ["fledging_failure", "between_year", "linear", null, "uploaded"],
    ]);
    expect(stored[0]!.standardError).toBe(0.012);
    expectClose(stored[1]!.standardError, 0.02, { rtol: 1e-15, label: "SE = sqrt(variance 0.0004)" });
    // Reference: R 4.2.2 qnorm(0.975) = 1.9599639845400536.
    expectClose(stored[2]!.standardError, 0.12 / (2 * 1.9599639845400536), { rtol: 1e-15, label: "SE from the 95% interval" });
    expect(stored[1]!.method).toBe("binomial GLM; standard error = square root of the uploaded sampling variance");
    expect(stored[2]!.method).toBe("weighted regression; standard error from the uploaded 95% confidence interval as (upper - lower) / (2 x 1.959964), on the link scale");

    const both = new ExcelJS.Workbook();
    const bad = both.addWorksheet("Sheet1");
    bad.addRow(["outcome", "level", "term", "year", "estimate", "std_error", "variance", "n", "scale", "link", "method"]);
    bad.addRow(["recruitment", "within_year", "linear", 2011, 0.1, 0.02, 0.0004, 50, "per_day", "logit", "m"]);
    bad.addRow(["recruitment", "within_year", "linear", 2012, 0.1, -0.2, null, 50, "per_day", "logit", "m"]);
    const refused = await previewUpload(database.db, uploadSourceFromBytes("both.xlsx", new Uint8Array(await both.xlsx.writeBuffer())), { siteCode: "XLS", kind: "estimates" }, LIMITS);
    expect(refused.problems.map((p) => [p.row, p.line, p.column, p.value, p.reason])).toEqual([
      [1, 2, "std_error", "0.02", "the row gives std_error and variance: give exactly one of standard error, variance or 95% interval"],
      [2, 3, "std_error", "-0.2", "standard error must be > 0"],
    ]);
  });

  it("estimates food peaks from an uploaded frass-fall series", async () => {
    // Reference: R 4.2.2 nls on the same series (test/fixtures/r-stats/frass-upload-series.json).
    const lines = ["date,frass per trap per day,spring temp"];
    for (const year of frassReference.years) {
      year.days.forEach((day, i) => {
        const date = new Date(Date.UTC(year.year, 0, day)).toISOString().slice(0, 10);
        lines.push(`${date},${year.frass[i]},${year.year === 2011 ? "7.5" : ""}`);
      });
    }
    const accepted = await acceptUpload(database.db, csv("frass.csv", `${lines.join("\n")}\n`), { siteCode: "FRS", kind: "site_year_covariates" }, actor, LIMITS);
    const stored = await database.db.siteYear.findMany({ where: { submissionId: accepted.submissionId }, orderBy: { year: "asc" } });
    expect(stored.map((r) => [r.year, r.meanSpringTempC])).toEqual([
      [2011, 7.5],
      [2012, null],
    ]);
    frassReference.years.forEach((reference, i) => {
      expectClose(stored[i]!.foodPeakDoy!, reference.peak, { rtol: 1e-6, label: `food peak ${reference.year}` });
      expectClose(stored[i]!.foodPeakSe!, reference.peakSe, { rtol: 1e-4, label: `food peak SE ${reference.year}` });
    });
    const tooFew = await previewUpload(database.db, csv("few.csv", "date,frass\n2011-05-01,1\n2011-05-02,2\n"), { siteCode: "FRS", kind: "site_year_covariates" }, LIMITS);
    expect(tooFew.problems).toEqual([expect.objectContaining({ row: 1, column: "frass", reason: expect.stringContaining("the food peak of 2011 cannot be estimated from its 2 frass samples") })]);
  });

  it("refuses files over the size or row limit, saying which limit", async () => {
    const before = await counts();
    const text = `year,female,lay date,clutch,fledged,recruits\n${Array.from({ length: 30 }, (_, i) => `2011,F-${i},105,9,7,1`).join("\n")}\n`;
    const big = await refusal(acceptUpload(database.db, csv("big.csv", text), { siteCode: "OAK", kind: "brood_records" }, actor, { ...LIMITS, maxBytes: 200 }));
    expect(big.code).toBe("too_large");
    expect(big.fieldErrors[0]!.message).toContain("larger than the upload limit of 200 bytes (PHENOPOOL_MAX_UPLOAD_BYTES)");
    const many = await refusal(acceptUpload(database.db, csv("many.csv", text), { siteCode: "OAK", kind: "brood_records" }, actor, { ...LIMITS, maxRows: 10 }));
    expect(many.code).toBe("too_large");
    expect(many.fieldErrors[0]).toMatchObject({ row: 11, message: expect.stringContaining("more than 10 data rows") });
    expect(await counts()).toEqual(before);
  });

  it("writes nothing when the file changes between its readings", async () => {
    const before = await counts();
    let opened = 0;
    const good = "year,female,lay date,clutch,fledged,recruits\n2015,F-1,105,9,7,1\n2015,F-2,105,9,7,1\n";
    const changing: UploadSource = {
      fileName: "changing.csv",
      open: () => uploadSourceFromBytes("changing.csv", opened++ === 0 ? good : good.replace("F-2,105,9,7", "F-2,105,9,17")).open(),
    };
    const error = await refusal(acceptUpload(database.db, changing, { siteCode: "OAK", kind: "brood_records" }, actor, LIMITS));
    expect(error.code).toBe("conflict");
    expect(await counts()).toEqual(before);
  });

  it("refuses an unknown site and a malformed request", async () => {
    expect((await refusal(previewUpload(database.db, csv("a.csv", "x\n1\n"), { siteCode: "NOPE", kind: "brood_records" }, LIMITS))).code).toBe("not_found");
    const bad = await refusal(previewUpload(database.db, csv("a.csv", "x\n1\n"), { siteCode: "OAK", kind: "nests" as never }, LIMITS));
    expect(bad.code).toBe("invalid_input");
    expect(bad.fieldErrors[0]!.field).toBe("kind");
  });

  it("reads a workbook written by openpyxl as brood records", async () => {
    const bytes = new Uint8Array(readFileSync("test/fixtures/openpyxl/broods.xlsx"));
    const expected = JSON.parse(readFileSync("test/fixtures/openpyxl/expected.json", "utf8"));
    const preview = await previewUpload(
      database.db,
      uploadSourceFromBytes("broods.xlsx", bytes),
      { siteCode: "OAK", kind: "brood_records", sheet: "Broods", mapping: { femaleId: "Female ring", layDate: "First egg", hatchDate: "Hatch date" } },
      LIMITS,
    );
    expect(preview.problems).toEqual([]);
    expect(preview.previewRows.map((r) => r.values)).toEqual(expected.rows);
  });
});
