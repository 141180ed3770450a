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
 * `partsOf`, when given, splits the key in two (e.g. year and female): keys are then kept per
 * first part, which for a million brood records takes half the time and memory of whole keys.
 */
export class DuplicateKeyTracker<T> {
  private readonly firstSeen = new Map<string, number>();
  private readonly grouped = new Map<string | number, Map<string, number>>();

  constructor(
    private readonly keyOf: (row: T) => string,
    private readonly partsOf?: (row: T) => readonly [string | number, string],
  ) {}

  /** The row number where `row`'s key was first seen, or null the first time (then it is recorded). */
  seen(row: T, rowNumber: number): number | null {
    let seenIn = this.firstSeen;
    let key: string;
    if (this.partsOf) {
      const [group, rest] = this.partsOf(row);
      let inGroup = this.grouped.get(group);
      if (!inGroup) this.grouped.set(group, (inGroup = new Map()));
      seenIn = inGroup;
      key = rest;
    } else {
      key = this.keyOf(row);
    }
    const first = seenIn.get(key);
    if (first === undefined) {
      seenIn.set(key, rowNumber);
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
