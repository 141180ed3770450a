import type { FieldError } from "../errors/app-error";

/**
 * One thing wrong with an uploaded file, in the user's own terms.
 *
 * Numbering (the same in the page, the CLI, the API and the downloadable report):
 * - `row` counts the records after the heading row: row 1 is the first data row, row 0 is the
 *   heading row itself (and problems of the file as a whole, such as an empty file).
 * - `line` is where the record starts in the file as a spreadsheet or text editor shows it:
 *   the line of a CSV/TSV file, the row number of an .xlsx sheet. The heading is usually line 1,
 *   so row N is usually line N + 1; they differ when a quoted cell holds a line break or blank
 *   lines precede the headings.
 */
export interface UploadProblem {
  file: string;
  row: number;
  line?: number;
  /** The column's heading as written in the user's file; "(file)" or "(headings)" when no one column is at fault. */
  column: string;
  /** The PhenoPool field the column is mapped to, when there is one. */
  field?: string;
  /** The cell as written in the file. */
  value?: string;
  reason: string;
}

export const FILE_COLUMN = "(file)";
export const HEADINGS_COLUMN = "(headings)";

/** Problems counted by column and reason, so a file with a million bad rows still says what is wrong. */
export interface ProblemTotals {
  problems: number;
  rowsWithProblems: number;
  /** Counts per column, largest first. */
  byColumn: { column: string; count: number }[];
  /** True when more problems were found than are listed (the totals still count all). */
  truncated: boolean;
}

/** Problems of one file, listed up to a cap and counted in full. */
export class ProblemCollector {
  readonly listed: UploadProblem[] = [];
  private total = 0;
  private readonly rows = new Set<number>();
  private readonly columns = new Map<string, number>();

  constructor(private readonly maxListed: number) {}

  add(problem: UploadProblem): void {
    this.total += 1;
    if (problem.row > 0) this.rows.add(problem.row);
    this.columns.set(problem.column, (this.columns.get(problem.column) ?? 0) + 1);
    if (this.listed.length < this.maxListed) this.listed.push(problem);
  }

  get count(): number {
    return this.total;
  }

  totals(): ProblemTotals {
    return {
      problems: this.total,
      rowsWithProblems: this.rows.size,
      byColumn: [...this.columns].map(([column, count]) => ({ column, count })).sort((a, b) => b.count - a.count),
      truncated: this.total > this.listed.length,
    };
  }
}

/** One problem as a sentence: `broods.csv, row 3 (line 4), column "std_error", value "-0.2": standard error must be > 0`. */
export function describeProblem(problem: UploadProblem): string {
  const where = [problem.file, problem.row > 0 ? `row ${problem.row}` : "headings"];
  if (problem.line !== undefined) where[1] += ` (line ${problem.line})`;
  const column = problem.column === FILE_COLUMN || problem.column === HEADINGS_COLUMN ? undefined : `column "${problem.column}"`;
  const value = problem.value !== undefined ? `value "${problem.value}"` : undefined;
  return `${[...where, column, value].filter(Boolean).join(", ")}: ${problem.reason}`;
}

/** The problem as the application's FieldError (field = the user's column heading). */
export function toFieldError(problem: UploadProblem): FieldError {
  return {
    field: problem.column,
    message: problem.reason,
    file: problem.file,
    ...(problem.row > 0 ? { row: problem.row } : {}),
    ...(problem.value !== undefined ? { value: problem.value } : {}),
  };
}

const REPORT_COLUMNS = ["file", "row", "line", "column", "field", "value", "reason"] as const;

function csvCell(text: string): string {
  // Quote every cell that could be misread; neutralise a leading formula sign so a spreadsheet shows the text.
  const safe = /^[=+\-@\t\r]/.test(text) && !/^-?\d/.test(text) ? `'${text}` : text;
  return /[",\r\n]/.test(safe) || safe !== text ? `"${safe.replace(/"/g, '""')}"` : safe;
}

/**
 * The problem report as CSV (UTF-8, comma, CRLF), one problem a line, for download.
 * Columns: file, row (1 = first data row, 0 = the heading row or the whole file), line (the
 * file's own line or sheet row), column (the user's heading), field (PhenoPool's), value, reason.
 * A last line says so when the list was cut short and how many problems there were in all.
 */
export function problemsToCsv(problems: readonly UploadProblem[], totals?: ProblemTotals): string {
  const lines = [REPORT_COLUMNS.join(",")];
  for (const p of problems) {
    lines.push(
      [p.file, String(p.row), p.line === undefined ? "" : String(p.line), p.column, p.field ?? "", p.value ?? "", p.reason].map(csvCell).join(","),
    );
  }
  if (totals?.truncated) {
    const file = problems[0]?.file ?? "";
    lines.push([file, "0", "", FILE_COLUMN, "", "", `${totals.problems} problems in all; the first ${problems.length} are listed`].map(csvCell).join(","));
  }
  return `${lines.join("\r\n")}\r\n`;
}
