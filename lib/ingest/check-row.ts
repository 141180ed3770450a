import type { z } from "zod";
import type { RecordReader } from "./record-reader";

/** Schema fields holding a day of year converted from the site's convention. */
const DAY_FIELDS = new Set(["layDateDoy", "hatchDateDoy", "foodPeakDoy", "sampleDoy"]);

/**
 * Checks a row built from a record against the kind's row schema (the one definition of a valid
 * row) and reports each refusal against the user's column and cell. When some cells could not be
 * read at all, the readable ones are still checked one by one, so every problem of the row is
 * reported, while rules across fields wait until the row reads whole.
 *
 * Returns the schema's output, or null when the row was refused.
 */
export function checkRow<S extends z.ZodObject>(schema: S, candidate: Record<string, unknown>, reader: RecordReader): z.output<S> | null {
  if (reader.failed) {
    const shape = schema.shape as Record<string, z.ZodType>;
    for (const [schemaField, value] of Object.entries(candidate)) {
      const origin = reader.origin(schemaField);
      if (origin && reader.hasFailed(origin.field)) continue;
      if (value === undefined) continue;
      const fieldSchema = shape[schemaField];
      if (!fieldSchema) continue;
      const parsed = fieldSchema.safeParse(value);
      if (!parsed.success) for (const issue of parsed.error.issues) report(reader, schemaField, issue.message);
    }
    return null;
  }
  const parsed = schema.safeParse(candidate);
  if (parsed.success) return parsed.data;
  for (const issue of parsed.error.issues) report(reader, issue.path.length ? String(issue.path[0]) : "", issue.message);
  return null;
}

function report(reader: RecordReader, schemaField: string, message: string): void {
  const origin = reader.origin(schemaField);
  const converted = DAY_FIELDS.has(schemaField) && reader.context.convention === "apr1";
  const reason = converted ? `${message} (days of the year counted from 1 January, converted from the site's 1 April days)` : message;
  reader.fail(origin?.field ?? schemaField, reason, origin ? { value: origin.value } : {});
}
