import type { Db, DbTransaction } from "../db/client";
import { columnMappingSchema, type ColumnMapping } from "../ingest/column-mapping";
import type { SubmissionKindName } from "../ingest/schemas/vocabulary";

/** The site's remembered mapping for a kind of upload, or null when it has none (or it no longer reads). */
export async function loadRememberedMapping(db: Db | DbTransaction, siteId: number, kind: SubmissionKindName): Promise<ColumnMapping | null> {
  const stored = await db.columnMapping.findUnique({ where: { siteId_kind: { siteId, kind } }, select: { mapping: true } });
  if (!stored) return null;
  try {
    const parsed = columnMappingSchema.safeParse(JSON.parse(stored.mapping));
    return parsed.success ? parsed.data : null;
  } catch {
    return null;
  }
}

/** Remembers the mapping an accepted upload used, to propose it next time. */
export async function rememberMapping(db: Db | DbTransaction, siteId: number, kind: SubmissionKindName, mapping: ColumnMapping): Promise<void> {
  const json = JSON.stringify(columnMappingSchema.parse(mapping));
  await db.columnMapping.upsert({
    where: { siteId_kind: { siteId, kind } },
    create: { siteId, kind, mapping: json },
    update: { mapping: json },
  });
}
