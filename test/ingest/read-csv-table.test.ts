/**
 * The small CSV reader: quoting as RFC 4180 defines it (section 2: fields with commas, quotes
 * doubled inside quoted fields, CRLF line ends), and errors that name the file, row and column.
 */
import { afterAll, describe, expect, it } from "vitest";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { AppError } from "@/lib/errors/app-error";
import { columnIndex, isNumericColumn, numericColumn, readCsvTable, requireValues, textColumn } from "@/lib/ingest/read-csv-table";

const folder = mkdtempSync(join(tmpdir(), "csv-table-"));
afterAll(() => rmSync(folder, { recursive: true, force: true }));
let counter = 0;
function file(text: string): string {
  counter += 1;
  const path = join(folder, `t${counter}.csv`);
  writeFileSync(path, text);
  return path;
}
function caught(action: () => unknown): AppError {
  try {
    action();
  } catch (error) {
    expect(error).toBeInstanceOf(AppError);
    return error as AppError;
  }
  throw new Error("expected an AppError");
}

describe("readCsvTable", () => {
  it("reads headings and rows; RFC 4180 quoting, CRLF line ends, a byte-order mark and blank lines", () => {
    const table = readCsvTable(file('\ufeffsite, estimate ,note\r\n"Oak Ridge, north",0.25,"said ""late"""\r\n\r\nB,-1.5e-2,\r\n'));
    expect(table.headers).toEqual(["site", "estimate", "note"]);
    expect(table.rows).toEqual([
      ["Oak Ridge, north", "0.25", 'said "late"'],
      ["B", "-1.5e-2", ""],
    ]);
    expect(Array.from(numericColumn(table, "estimate"))).toEqual([0.25, -0.015]);
    expect(textColumn(table, "site")).toEqual(["Oak Ridge, north", "B"]);
    expect(columnIndex(table, "note")).toBe(2);
    expect(isNumericColumn(table, "estimate")).toBe(true);
    expect(isNumericColumn(table, "site")).toBe(false);
  });

  it("names a missing file, an empty file, blank or repeated headings", () => {
    expect(caught(() => readCsvTable(join(folder, "absent.csv"))).message).toMatch(/cannot read .*absent\.csv: no such file/);
    expect(caught(() => readCsvTable(file(""))).message).toMatch(/the file is empty/);
    expect(caught(() => readCsvTable(file("a,b\n"))).message).toMatch(/no data rows/);
    const blank = caught(() => readCsvTable(file("a,,c\n1,2,3\n")));
    expect(blank.fieldErrors[0]).toMatchObject({ field: "column 2", message: "the heading cell is blank" });
    const repeated = caught(() => readCsvTable(file("a,b,a\n1,2,3\n")));
    expect(repeated.fieldErrors[0]!.message).toMatch(/heading 'a' appears more than once/);
  });

  it("names every ragged row with its cell count", () => {
    const path = file("a,b,c\n1,2,3\n4,5\n6,7,8,9\n");
    const error = caught(() => readCsvTable(path));
    expect(error.code).toBe("invalid_input");
    expect(error.message).toMatch(/2 row\(s\) do not have 3 cells/);
    expect(error.fieldErrors).toEqual([
      { field: "row", file: path, row: 2, message: "has 2 cells; the heading row has 3" },
      { field: "row", file: path, row: 3, message: "has 4 cells; the heading row has 3" },
    ]);
  });

  it("names a missing column, and each non-numeric or empty cell with row and value", () => {
    const path = file("site,estimate\nA,0.1\nB,abc\nC,\nD,NA\nE,1e400\n");
    const table = readCsvTable(path);
    const missing = caught(() => numericColumn(table, "se"));
    expect(missing.message).toMatch(/no column 'se'/);
    expect(missing.fieldErrors[0]!.message).toMatch(/the file has 'site', 'estimate'/);
    const error = caught(() => numericColumn(table, "estimate"));
    expect(error.message).toMatch(/4 cell\(s\) are not numbers/);
    expect(error.fieldErrors.map((e) => [e.row, e.field, e.value])).toEqual([
      [2, "estimate", "abc"],
      [3, "estimate", ""],
      [4, "estimate", "NA"],
      [5, "estimate", "1e400"],
    ]);
    expect(error.fieldErrors[0]!.message).toBe("'abc' is not a number");
    expect(error.fieldErrors[2]!.message).toMatch(/marks a missing value/);
  });

  it("refuses a column with empty or NA cells, naming the rows", () => {
    const table = readCsvTable(file("site,habitat\nA,oak\nB,\nC,NA\nD,pine\n"));
    const error = caught(() => requireValues(table, "habitat"));
    expect(error.message).toMatch(/column 'habitat' has 2 missing value\(s\)/);
    expect(error.fieldErrors.map((e) => e.row)).toEqual([2, 3]);
    expect(() => requireValues(table, "site")).not.toThrow();
  });

  it("reports unbalanced quotes", () => {
    expect(caught(() => readCsvTable(file('a,b\n"open,1\n2,3\n'))).message).toMatch(/unbalanced quotes/);
  });
});
