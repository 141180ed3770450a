import type { ResolvedColumns } from "./column-mapping";
import { cellText, isEmptyCell, readCode, readDay, readNumber, readText, readWholeNumber, type CellReading, type DayReading } from "./parse-cell";
import type { DateConventionName } from "./date-convention";
import type { CellValue, TableRecord } from "./read-upload-table";
import type { UploadProblem } from "./upload-problem";

/** What every row of one upload is read with. */
export interface RowReadContext {
  file: string;
  decimalComma: boolean;
  convention: DateConventionName;
  /** The site the file is uploaded for. */
  siteCode: string;
  /** Every site code of the network, to name a row's unknown site. */
  networkSiteCodes: ReadonlySet<string>;
}

/** Where a schema field's value came from, so a refusal names the user's column and cell. */
export interface FieldOrigin {
  column: string;
  field: string;
  value: string;
}

/**
 * Reads the mapped cells of one record, reporting each unreadable cell as a problem naming the
 * row, the user's heading and the cell. Each reader returns the value, null for an empty cell,
 * or undefined when it reported a problem.
 */
export class RecordReader {
  /** Schema field -> the upload field whose column it was read from. */
  private readonly traced = new Map<string, string>();
  private failedFields: Set<string> | null = null;

  constructor(
    readonly record: TableRecord,
    private readonly columns: ResolvedColumns,
    readonly context: RowReadContext,
    private readonly problems: UploadProblem[],
  ) {}

  /** Whether any cell of the row could not be read. */
  get failed(): boolean {
    return this.failedFields !== null;
  }

  /** Whether `field`'s cell could not be read. */
  hasFailed(field: string): boolean {
    return this.failedFields?.has(field) ?? false;
  }

  has(field: string): boolean {
    return this.columns.has(field);
  }

  heading(field: string): string {
    return this.columns.get(field)?.heading ?? field;
  }

  cell(field: string): CellValue {
    const column = this.columns.get(field);
    if (!column) return null;
    return this.record.cells[column.index] ?? null;
  }

  /** Records that schema field `schemaField` was read from `field`'s column. */
  trace(schemaField: string, field: string): void {
    if (this.columns.has(field)) this.traced.set(schemaField, field);
  }

  /** The column and cell schema field `schemaField` was read from, if it was traced. */
  origin(schemaField: string): FieldOrigin | undefined {
    const field = this.traced.get(schemaField);
    if (field === undefined) return undefined;
    return { column: this.heading(field), field, value: cellText(this.cell(field)) };
  }

  /** Reports a problem with `field`'s cell (or the row, when the field has no column). */
  fail(field: string, reason: string, options: { value?: string } = {}): undefined {
    (this.failedFields ??= new Set()).add(field);
    const mapped = this.columns.has(field);
    const value = options.value ?? (mapped ? cellText(this.cell(field)) : undefined);
    this.problems.push({
      file: this.context.file,
      row: this.record.row,
      line: this.record.line,
      column: mapped ? this.heading(field) : `(${field})`,
      field,
      ...(value !== undefined ? { value } : {}),
      reason,
    });
    return undefined;
  }

  private take<T>(field: string, reading: CellReading<T>, required: boolean, prefix: boolean): T | null | undefined {
    if (!reading.ok) return this.fail(field, prefix ? `${this.heading(field)} "${cellText(this.cell(field))}" ${reading.reason}` : reading.reason);
    if (reading.value === null && required) {
      return this.fail(field, this.has(field) ? `${this.heading(field)} is empty` : `no column for ${field}`);
    }
    return reading.value;
  }

  number(field: string, required: boolean): number | null | undefined {
    return this.take(field, readNumber(this.cell(field), this.context.decimalComma), required, true);
  }

  wholeNumber(field: string, required: boolean): number | null | undefined {
    return this.take(field, readWholeNumber(this.cell(field), this.context.decimalComma), required, true);
  }

  text(field: string, required: boolean): string | null | undefined {
    return this.take(field, readText(this.cell(field)), required, true);
  }

  code(field: string, required: boolean): string | null | undefined {
    return this.take(field, readCode(this.cell(field)), required, true);
  }

  day(field: string, options: { year: number | null; whole: boolean; required: boolean }): DayReading | null | undefined {
    const reading = readDay(this.cell(field), {
      convention: this.context.convention,
      year: options.year,
      decimalComma: this.context.decimalComma,
      whole: options.whole,
      heading: this.heading(field),
    });
    return this.take(field, reading, options.required, false);
  }

  isEmpty(field: string): boolean {
    return isEmptyCell(this.cell(field));
  }

  /** The row's site code, when the file has one, must be a site of the network and the upload's own. */
  checkSiteCode(): void {
    if (!this.has("siteCode")) return;
    const code = this.text("siteCode", true);
    if (!code) return;
    if (!this.context.networkSiteCodes.has(code)) {
      this.fail("siteCode", `site code ${code} is not in this network`);
    } else if (code !== this.context.siteCode) {
      this.fail("siteCode", `the row is for site ${code}, but the file is uploaded for site ${this.context.siteCode}`);
    }
  }
}
