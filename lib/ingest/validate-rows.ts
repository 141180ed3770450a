import type { z } from "zod";
import type { FieldError } from "../errors/app-error";

export interface RowValidation<T> {
  /** The rows that passed, in file order. */
  rows: T[];
  /** The 1-based file row of each passing row (rows[i] came from file row rowNumbers[i]). */
  rowNumbers: number[];
  errors: FieldError[];
}

/**
 * Parses every row with `schema`, collecting every problem rather than stopping at the first.
 * Rows are numbered from 1 (the first data row). `file` is named in each error when given.
 */
export function validateRows<S extends z.ZodType>(schema: S, input: readonly unknown[], file?: string): RowValidation<z.output<S>> {
  const rows: z.output<S>[] = [];
  const rowNumbers: number[] = [];
  const errors: FieldError[] = [];
  input.forEach((raw, index) => {
    const parsed = schema.safeParse(raw);
    if (parsed.success) {
      rows.push(parsed.data);
      rowNumbers.push(index + 1);
      return;
    }
    for (const issue of parsed.error.issues) {
      const field = issue.path.length ? issue.path.join(".") : "(row)";
      const value = issue.path.length === 1 && raw && typeof raw === "object" ? (raw as Record<string, unknown>)[String(issue.path[0])] : undefined;
      errors.push({
        row: index + 1,
        field,
        message: issue.message,
        ...(file ? { file } : {}),
        ...(value !== undefined ? { value: String(value) } : {}),
      });
    }
  });
  return { rows, rowNumbers, errors };
}

/**
 * Remembers the natural key of each row seen so far and tells, for a repeated key, the row it
 * first appeared in. Used by the in-memory check below and by uploads that stream row by row.
 */
export class DuplicateKeyTracker<T> {
  private readonly firstSeen = new Map<string, number>();

  constructor(private readonly keyOf: (row: T) => string) {}

  /** The row number where `row`'s key was first seen, or null the first time (then it is recorded). */
  seen(row: T, rowNumber: number): number | null {
    const key = this.keyOf(row);
    const first = this.firstSeen.get(key);
    if (first === undefined) {
      this.firstSeen.set(key, rowNumber);
      return null;
    }
    return first;
  }
}

/**
 * Reports rows whose key repeats an earlier row's: `describe` words the clash for the user,
 * e.g. "female F-203 has two broods in 2011". `validation` is the output of validateRows, so
 * errors name the rows' places in the file.
 */
export function findDuplicateKeys<T>(
  validation: Pick<RowValidation<T>, "rows" | "rowNumbers">,
  keyOf: (row: T) => string,
  describe: (row: T, firstRow: number) => string,
  field: string,
  file?: string,
): FieldError[] {
  const tracker = new DuplicateKeyTracker(keyOf);
  const errors: FieldError[] = [];
  validation.rows.forEach((row, index) => {
    const fileRow = validation.rowNumbers[index]!;
    const first = tracker.seen(row, fileRow);
    if (first !== null) errors.push({ row: fileRow, field, message: describe(row, first), ...(file ? { file } : {}) });
  });
  return errors;
}
