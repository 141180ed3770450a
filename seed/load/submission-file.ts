/**
 * The file a demo site would upload: its rows rendered as CSV by the project's one CSV writer,
 * with the SHA-256 of those bytes. The same rows always give the same bytes, so the same seed
 * gives the same submission hashes.
 */
import { createHash } from "node:crypto";
import { toCsv, type CsvCell } from "../../lib/export/csv";

export interface SubmissionFile<Row> {
  fileName: string;
  sha256: string;
  rows: Row[];
}

/** Renders `rows` with one column per field in `fields` order (field name as header). */
export function submissionFile<Row extends Record<string, CsvCell>>(fileName: string, fields: readonly (keyof Row & string)[], rows: Row[]): SubmissionFile<Row> {
  const csv = toCsv(
    fields.map((field) => ({ header: field, value: (row: Row) => row[field] as CsvCell })),
    rows,
  );
  return { fileName, sha256: createHash("sha256").update(csv, "utf8").digest("hex"), rows };
}
