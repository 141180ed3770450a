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
  const firstSeen = new Map<string, number>();
  const errors: FieldError[] = [];
  validation.rows.forEach((row, index) => {
    const fileRow = validation.rowNumbers[index]!;
    const key = keyOf(row);
    const first = firstSeen.get(key);
    if (first === undefined) firstSeen.set(key, fileRow);
    else errors.push({ row: fileRow, field, message: describe(row, first), ...(file ? { file } : {}) });
  });
  return errors;
}
