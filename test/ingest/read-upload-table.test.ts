import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import ExcelJS from "exceljs";
import { readUploadTable, type TableHeadings, type TableRecord } from "@/lib/ingest/read-upload-table";
import { uploadSourceFromBytes, UploadFileError, type ByteMeter } from "@/lib/ingest/upload-source";
import { createHash } from "node:crypto";

async function read(bytes: Uint8Array | string, options: { delimiter?: "," | ";" | "\t"; sheet?: string; maxBytes?: number } = {}) {
  const headings: TableHeadings[] = [];
  const records: TableRecord[] = [];
  const meter: ByteMeter = { bytes: 0, sha256: null };
  const info = await readUploadTable(
    uploadSourceFromBytes("upload.csv", bytes),
    { maxBytes: options.maxBytes ?? 1e9, ...options },
    { onHeadings: (h) => void headings.push(h), onRecords: (r) => void records.push(...r) },
    meter,
  );
  return { info, headings, records, meter };
}

async function failure(bytes: Uint8Array | string, options: { maxBytes?: number; sheet?: string } = {}): Promise<UploadFileError> {
  const error = await read(bytes, options).then(
    () => null,
    (e: unknown) => e,
  );
  expect(error).toBeInstanceOf(UploadFileError);
  return error as UploadFileError;
}

describe("reading delimited text", () => {
  it("drops a UTF-8 byte-order mark, detects semicolons, skips blank lines but keeps row numbers", async () => {
    const { info, headings, records, meter } = await read("\uFEFFyear;temp\n2011;7,5\n\n2012;8,25\n");
    expect(info).toMatchObject({ format: "csv", delimiter: ";", delimiterDetected: true, byteOrderMark: true });
    expect(headings).toEqual([{ headings: ["year", "temp"], line: 1 }]);
    expect(records.map((r) => [r.row, r.line, r.cells])).toEqual([
      [1, 2, ["2011", "7,5"]],
      [3, 4, ["2012", "8,25"]],
    ]);
    // Reference: node:crypto's SHA-256 of the same bytes.
    expect(meter.sha256).toBe(createHash("sha256").update("\uFEFFyear;temp\n2011;7,5\n\n2012;8,25\n").digest("hex"));
  });

  it("takes a given delimiter over the guess", async () => {
    const { records } = await read("a,b;c\n1,2;3\n", { delimiter: ";" });
    expect(records[0]!.cells).toEqual(["1,2", "3"]);
  });

  it("refuses Latin-1, UTF-16 and binary files with the line and byte", async () => {
    const latin1 = Uint8Array.from([...Buffer.from("female\nF-1\nG"), 0xe9, ...Buffer.from("rard\n")]);
    expect((await failure(latin1)).problem).toMatchObject({ row: 0, line: 3, column: "(file)", reason: expect.stringContaining("line 3, byte 13: byte 0xE9 is not UTF-8") });
    const utf16 = Uint8Array.from([0xff, 0xfe, ...Buffer.from("y\0e\0a\0r\0")]);
    expect((await failure(utf16)).problem.reason).toContain("UTF-16");
    expect((await failure(Uint8Array.from([0xd0, 0xcf, 0x11, 0xe0, 0, 0]))).problem.reason).toContain(".xls");
    expect((await failure(Uint8Array.from([0x61, 0x0a, 0x62, 0x00, 0x63]))).problem).toMatchObject({ line: 2, reason: expect.stringContaining("NUL") });
  });

  it("stops a file over the size limit while it streams, and says which limit", async () => {
    const error = await failure("x".repeat(5000), { maxBytes: 1000 });
    expect(error.tooLarge).toBe(true);
    expect(error.problem.reason).toContain("PHENOPOOL_MAX_UPLOAD_BYTES");
  });
});

describe("reading .xlsx workbooks", () => {
  async function workbook(): Promise<Uint8Array> {
    const wb = new ExcelJS.Workbook();
    wb.addWorksheet("Read me").addRow(["notes"]);
    const sheet = wb.addWorksheet("Estimates 2011");
    sheet.addRow(["Outcome", "SE", "Year", "Date", "Rich"]);
    sheet.addRow(["recruitment", 0.25, 2011, new Date(Date.UTC(2011, 3, 23)), { richText: [{ text: "a" }, { text: "b" }] }]);
    sheet.addRow([]);
    sheet.addRow(["recruitment", { formula: "0.1*2", result: 0.2 }, 2012, null, "#N/A"]);
    return new Uint8Array(await wb.xlsx.writeBuffer());
  }

  it("reads the first sheet, or the one named, with numbers, dates, formulas' values and rich text", async () => {
    const bytes = await workbook();
    const first = await read(bytes);
    expect(first.info).toMatchObject({ format: "xlsx", sheet: "Read me", sheets: ["Read me", "Estimates 2011"] });
    expect(first.headings[0]!.headings).toEqual(["notes"]);
    const named = await read(bytes, { sheet: "estimates 2011" });
    expect(named.headings[0]).toEqual({ headings: ["Outcome", "SE", "Year", "Date", "Rich"], line: 1 });
    expect(named.records.map((r) => [r.row, r.line, r.cells])).toEqual([
      [1, 2, ["recruitment", 0.25, 2011, "2011-04-23", "ab"]],
      [3, 4, ["recruitment", 0.2, 2012, null, "#N/A"]],
    ]);
  });

  it("names the sheets when the one asked for is not there", async () => {
    const error = await failure(await workbook(), { sheet: "Broods" });
    expect(error.problem.reason).toBe('the workbook has no sheet named "Broods"; its sheets are "Read me", "Estimates 2011"');
  });

  it("refuses a damaged workbook as a problem, not a crash", async () => {
    const bytes = await workbook();
    const error = await failure(bytes.subarray(0, Math.floor(bytes.length / 2)));
    expect(error.problem.reason).toContain("cannot be read as .xlsx");
  });

  // Reference: a workbook written by openpyxl (test/fixtures/openpyxl/), not by the library we read with.
  it("reads a workbook written by openpyxl", async () => {
    const bytes = new Uint8Array(readFileSync("test/fixtures/openpyxl/broods.xlsx"));
    const expected = JSON.parse(readFileSync("test/fixtures/openpyxl/expected.json", "utf8"));
    const { info, headings, records } = await read(bytes, { sheet: "Broods" });
    expect(info.sheets).toEqual(expected.sheets);
    expect(headings[0]!.headings).toEqual(expected.headings);
    expect(records.map((r) => r.cells)).toEqual([
      [2011, "F-101", "2011-04-23", 9, "2011-05-12", 7, 1],
      [2011, 203, "2011-04-30", 8, null, 6, 0],
      [2012, "F-101", 112, 10, 131, 10, 2],
    ]);
  });
});
