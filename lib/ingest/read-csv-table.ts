/**
 * A small reader for a comma-separated file with one heading row, for command-line tools that
 * take a table of numbers (pooled estimates, brood records). Returns the cells as text; columns
 * are looked up and converted by name with errors that name the file, the data row and the column.
 * The full upload parser (formats, encodings, column mapping) is read-upload-table.ts.
 *
 * Row numbers: row 1 is the first record after the heading row (line 2 of the file when no
 * record spans lines), as in FieldError.
 */
import { readFileSync } from "node:fs";
import { AppError, type FieldError } from "../errors/app-error";
import { splitDelimitedText, type Delimiter } from "./delimited-tokenizer";
import { isEmptyCell, readNumber } from "./parse-cell";

export interface CsvTable {
  readonly file: string;
  /** Heading cells, trimmed. */
  readonly headers: readonly string[];
  /** Data rows, each with exactly headers.length cells (blank lines skipped). */
  readonly rows: readonly (readonly string[])[];
}

/** At most this many field errors are listed; the message gives the total. */
const MAX_LISTED = 20;

function invalid(file: string, message: string, fieldErrors: FieldError[]): AppError {
  const listed = fieldErrors.slice(0, MAX_LISTED);
  const more = fieldErrors.length > MAX_LISTED ? ` (first ${MAX_LISTED} of ${fieldErrors.length} listed)` : "";
  return new AppError("invalid_input", `${file}: ${message}${more}`, listed);
}

/**
 * Reads `path` as CSV (delimiter `,` unless given).
 * Returns the headings and the rows as text. Throws AppError (invalid_input) when the file cannot
 * be read, is empty, has a blank or repeated heading, has unbalanced quotes, or has a row whose
 * number of cells differs from the heading row (every such row is named).
 * Example: readCsvTable("pooled.csv").headers -> ["site", "estimate", "se"].
 */
export function readCsvTable(path: string, delimiter = ","): CsvTable {
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (error) {
    const reason = error instanceof Error && "code" in error && error.code === "ENOENT" ? "no such file" : error instanceof Error ? error.message : String(error);
    throw new AppError("invalid_input", `cannot read ${path}: ${reason}`, [{ field: "file", file: path, message: reason }]);
  }
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  // Records whose cells are all blank are skipped, as blank lines are.
  const parsed = splitDelimitedText(text, delimiter as Delimiter).filter((r) => r.issues !== null || r.cells.some((cell) => cell.trim() !== ""));
  const quoting = parsed.flatMap((record, index) =>
    (record.issues ?? []).map((issue) => ({
      field: "file",
      file: path,
      ...(index > 0 ? { row: index } : {}),
      message:
        issue.kind === "unclosed_quote"
          ? `a quoted cell opened on line ${issue.line} is never closed`
          : `line ${issue.line}: text follows the closing quote of a quoted cell`,
    })),
  );
  if (quoting.length > 0) throw invalid(path, "unbalanced quotes", quoting);
  const [headingRow, ...records] = parsed.map((r) => r.cells);
  if (headingRow === undefined) throw invalid(path, "the file is empty; it needs a heading row and at least one data row", [{ field: "file", file: path, message: "empty file" }]);
  const headers = headingRow.map((cell) => cell.trim());
  const headingErrors: FieldError[] = [];
  headers.forEach((name, index) => {
    if (name === "") headingErrors.push({ field: `column ${index + 1}`, file: path, message: "the heading cell is blank" });
    else if (headers.indexOf(name) !== index) headingErrors.push({ field: name, file: path, message: `heading '${name}' appears more than once` });
  });
  if (headingErrors.length > 0) throw invalid(path, "every column needs a distinct heading", headingErrors);
  const raggedErrors: FieldError[] = [];
  records.forEach((cells, index) => {
    if (cells.length !== headers.length) {
      raggedErrors.push({ field: "row", file: path, row: index + 1, message: `has ${cells.length} cells; the heading row has ${headers.length}` });
    }
  });
  if (raggedErrors.length > 0) throw invalid(path, `${raggedErrors.length} row(s) do not have ${headers.length} cells`, raggedErrors);
  if (records.length === 0) throw invalid(path, "the file has a heading row but no data rows", [{ field: "file", file: path, message: "no data rows" }]);
  return { file: path, headers, rows: records };
}

/**
 * The index of column `name`. Throws AppError (invalid_input) naming the missing column and the
 * columns that exist. Example: columnIndex(table, "se") -> 2.
 */
export function columnIndex(table: CsvTable, name: string): number {
  const index = table.headers.indexOf(name);
  if (index < 0) {
    throw invalid(table.file, `no column '${name}'`, [
      { field: name, file: table.file, message: `missing column; the file has ${table.headers.map((h) => `'${h}'`).join(", ")}` },
    ]);
  }
  return index;
}

/** The cells of column `name` as text, one per row. Throws like columnIndex. */
export function textColumn(table: CsvTable, name: string): string[] {
  const index = columnIndex(table, name);
  return table.rows.map((cells) => cells[index]!.trim());
}

/**
 * Column `name` as finite numbers (plain decimal notation, e.g. -0.25 or 1.5e-3).
 * Throws AppError (invalid_input) listing each empty or non-numeric cell with its row and value.
 * Example: numericColumn(table, "estimate") -> Float64Array [0.12, -0.3, ...].
 */
export function numericColumn(table: CsvTable, name: string): Float64Array {
  const index = columnIndex(table, name);
  const values = new Float64Array(table.rows.length);
  const errors: FieldError[] = [];
  table.rows.forEach((cells, row) => {
    const cell = cells[index]!;
    const reading = readNumber(cell, false);
    if (!reading.ok) errors.push({ field: name, file: table.file, row: row + 1, value: cell, message: `'${cell}' ${reading.reason}` });
    else if (reading.value === null) errors.push({ field: name, file: table.file, row: row + 1, value: cell, message: isEmptyCell(cell) && cell.trim() !== "" ? `'${cell}' marks a missing value; a number is needed` : "is empty; a number is needed" });
    else values[row] = reading.value;
  });
  if (errors.length > 0) throw invalid(table.file, `column '${name}' needs a number in every row; ${errors.length} cell(s) are not numbers`, errors);
  return values;
}

/**
 * Refuses a column with empty cells (or cells that mark a missing value, such as NA), listing
 * each with its row, so that no row is silently dropped or miscoded.
 * Example: requireValues(table, "habitat") passes when every row names a habitat.
 */
export function requireValues(table: CsvTable, name: string): void {
  const index = columnIndex(table, name);
  const errors: FieldError[] = [];
  table.rows.forEach((cells, row) => {
    const cell = cells[index]!;
    if (isEmptyCell(cell)) {
      errors.push({ field: name, file: table.file, row: row + 1, value: cell, message: cell.trim() === "" ? "is empty; a value is needed" : `'${cell}' marks a missing value; a value is needed` });
    }
  });
  if (errors.length > 0) throw invalid(table.file, `column '${name}' has ${errors.length} missing value(s); every row needs one`, errors);
}

/** Whether every cell of column `name` reads as a number (to tell numeric from categorical columns). */
export function isNumericColumn(table: CsvTable, name: string): boolean {
  const index = columnIndex(table, name);
  return table.rows.every((cells) => {
    const reading = readNumber(cells[index]!, false);
    return reading.ok && reading.value !== null;
  });
}
