import { toCsv, type CsvColumn } from "../export/csv";
import type { AuditEntryView } from "./list-audit";

const json = (value: unknown): string | null => (value === null || value === undefined ? null : JSON.stringify(value));

/** The audit trail as CSV: one row per entry, the before and after summaries as JSON text. */
export const AUDIT_COLUMNS: readonly CsvColumn<AuditEntryView>[] = [
  { header: "id", value: (e) => e.id },
  { header: "at", value: (e) => e.at.toISOString() },
  { header: "actorUserId", value: (e) => e.actorUserId },
  { header: "actor", value: (e) => e.actorLabel },
  { header: "action", value: (e) => e.action },
  { header: "entityType", value: (e) => e.entityType },
  { header: "entityId", value: (e) => e.entityId },
  { header: "before", value: (e) => json(e.before) },
  { header: "after", value: (e) => json(e.after) },
  { header: "sha256", value: (e) => e.sha256 },
];

/** The audit entries as one CSV document (RFC 4180, see lib/export/csv.ts). */
export function auditCsv(entries: readonly AuditEntryView[]): string {
  return toCsv(AUDIT_COLUMNS, entries);
}
