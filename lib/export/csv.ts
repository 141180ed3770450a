/**
 * The one CSV writer: every CSV PhenoPool produces (estimate and brood-record exports, analysis
 * results, the data package's tables) goes through `toCsv`.
 *
 * Format: RFC 4180 (comma separator, CRLF line ends, double quotes doubled inside quoted cells),
 * UTF-8, a header row. Numbers are written unquoted in JavaScript's shortest round-trip form, so a
 * parser reads back the same double; negative numbers stay numbers. null is an empty cell.
 *
 * Spreadsheets run a cell that starts with =, +, - or @ (and, in some, tab or carriage return) as a
 * formula. Such string cells are neutralised by a leading apostrophe (common practice, as
 * recommended by OWASP's "CSV Injection" page). The rule is reversible, so an importer gets the
 * exact string back: a string is prefixed with one apostrophe when, after any apostrophes it
 * already starts with, its first character is a formula trigger; `restoreNeutralisedCell` removes
 * that one apostrophe again.
 */

export type CsvCell = string | number | boolean | null;

export interface CsvColumn<Row> {
  header: string;
  value: (row: Row) => CsvCell;
}

const FORMULA_LEADING = /^'*[=+\-@\t\r]/;
const NEUTRALISED = /^'+[=+\-@\t\r]/;
const NEEDS_QUOTES = /[",\r\n]|^\s|\s$/;

/** A string cell made safe to open in a spreadsheet (see the module comment). */
export function neutraliseFormula(text: string): string {
  return FORMULA_LEADING.test(text) ? `'${text}` : text;
}

/** Inverse of neutraliseFormula: the string as it was before export. */
export function restoreNeutralisedCell(text: string): string {
  return NEUTRALISED.test(text) ? text.slice(1) : text;
}

/**
 * One cell as CSV text. Throws for a non-finite number: a CSV never carries NaN or infinity
 * silently (the caller must refuse or explain the value first).
 * Example: csvCell(-0.25) -> "-0.25"; csvCell("=SUM(A1)") -> "'=SUM(A1)"; csvCell('a "b"') -> "\"a \"\"b\"\"\"".
 */
export function csvCell(value: CsvCell): string {
  if (value === null) return "";
  if (typeof value === "number") {
    if (!Number.isFinite(value)) throw new Error(`cannot write ${value} to a CSV cell: only finite numbers`);
    // -0 prints as "0" either way; String keeps full precision (shortest round-trip form).
    return String(value);
  }
  if (typeof value === "boolean") return value ? "true" : "false";
  const safe = neutraliseFormula(value);
  return NEEDS_QUOTES.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

/** A whole CSV document: header row, then one line per row, each line ended by CRLF. */
export function toCsv<Row>(columns: readonly CsvColumn<Row>[], rows: Iterable<Row>): string {
  const lines = [columns.map((c) => csvCell(c.header)).join(",")];
  for (const row of rows) lines.push(columns.map((c) => csvCell(c.value(row))).join(","));
  return `${lines.join("\r\n")}\r\n`;
}
