import type { DbTransaction, Db } from "../db/client";
import type { Actor } from "../auth/actor";

export interface AuditRecord {
  action: string;
  entityType: string;
  entityId?: string | number | null;
  before?: unknown;
  after?: unknown;
  sha256?: string | null;
}

/**
 * Appends one entry to the audit trail. Call it inside the transaction of the change it records,
 * so a change and its entry are written together or not at all. The database refuses updates to
 * written entries.
 */
export async function recordAudit(db: Db | DbTransaction, actor: Actor, record: AuditRecord, now = new Date()): Promise<void> {
  await db.auditEntry.create({
    data: {
      at: now,
      actorUserId: actor.userId,
      actorLabel: actor.label,
      action: record.action,
      entityType: record.entityType,
      entityId: record.entityId === undefined || record.entityId === null ? null : String(record.entityId),
      summary: JSON.stringify({ before: record.before ?? null, after: record.after ?? null }),
      sha256: record.sha256 ?? null,
    },
  });
}
