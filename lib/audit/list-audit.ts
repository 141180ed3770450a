import { z } from "zod";
import type { Db } from "../db/client";
import type { Actor } from "../auth/actor";
import { authorize } from "../auth/policy";
import { readNetworkSettings } from "../settings/network-settings";

const optionalText = z
  .string()
  .trim()
  .max(200)
  .optional()
  .transform((text) => (text === "" ? undefined : text));

/** Filters of the audit trail; every filter given must match. Dates are ISO 8601 (a bare date is midnight UTC). */
export const auditFilterSchema = z.object({
  entityType: optionalText.describe("Kind of thing changed (Site, submission, User, ...)."),
  entityId: optionalText.describe("Id or code of the thing changed."),
  action: optionalText.describe("What was done (site.create, submission.upload, ...)."),
  actor: optionalText.describe("Part of the actor's name or email, any case."),
  since: z.coerce.date().optional().describe("Entries at or after this time."),
  until: z.coerce.date().optional().describe("Entries before this time."),
});
export type AuditFilter = z.output<typeof auditFilterSchema>;

export const auditQuerySchema = auditFilterSchema.extend({
  limit: z.coerce.number().int().min(1).max(10_000).default(200),
});

export interface AuditEntryView {
  id: number;
  at: Date;
  actorUserId: number | null;
  actorLabel: string;
  action: string;
  entityType: string;
  entityId: string | null;
  before: unknown;
  after: unknown;
  sha256: string | null;
}

function where(filter: Partial<AuditFilter>) {
  const at: { gte?: Date; lt?: Date } = {};
  if (filter.since) at.gte = filter.since;
  if (filter.until) at.lt = filter.until;
  return {
    ...(filter.entityType ? { entityType: filter.entityType } : {}),
    ...(filter.entityId ? { entityId: filter.entityId } : {}),
    ...(filter.action ? { action: filter.action } : {}),
    ...(Object.keys(at).length ? { at } : {}),
  };
}

/** The stored summary text as { before, after }; a summary that is not JSON is shown as written, never dropped. */
function summaryOf(text: string): { before: unknown; after: unknown } {
  try {
    const parsed = JSON.parse(text) as { before?: unknown; after?: unknown };
    return { before: parsed.before ?? null, after: parsed.after ?? null };
  } catch {
    return { before: null, after: text };
  }
}

/**
 * The audit trail, newest first (coordinator only: AppError forbidden otherwise). `limit` caps
 * the rows; without it every matching entry (for the export). The actor filter matches part of the
 * name or email in any case (done here, as SQLite and PostgreSQL differ on case-insensitive LIKE).
 */
export async function listAuditEntries(db: Db, actor: Actor, filter: Partial<AuditFilter> & { limit?: number }): Promise<AuditEntryView[]> {
  authorize(actor, "audit.read", {}, await readNetworkSettings(db));
  const needle = filter.actor?.toLowerCase();
  const rows = await db.auditEntry.findMany({ where: where(filter), orderBy: { id: "desc" }, ...(needle ? {} : { take: filter.limit }) });
  const matching = needle ? rows.filter((row) => row.actorLabel.toLowerCase().includes(needle)).slice(0, filter.limit) : rows;
  return matching.map(({ summary, ...row }) => ({ ...row, ...summaryOf(summary) }));
}

/** The distinct actions and entity types in the trail, for the filter's choices. */
export async function auditVocabulary(db: Db, actor: Actor): Promise<{ actions: string[]; entityTypes: string[] }> {
  authorize(actor, "audit.read", {}, await readNetworkSettings(db));
  const [actions, entityTypes] = await Promise.all([
    db.auditEntry.findMany({ distinct: ["action"], select: { action: true }, orderBy: { action: "asc" } }),
    db.auditEntry.findMany({ distinct: ["entityType"], select: { entityType: true }, orderBy: { entityType: "asc" } }),
  ]);
  return { actions: actions.map((a) => a.action), entityTypes: entityTypes.map((e) => e.entityType) };
}
