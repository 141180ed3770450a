import { z } from "zod";
import type { Db } from "../db/client";
import type { Actor } from "../auth/actor";
import { authorize } from "../auth/policy";
import { readNetworkSettings } from "../settings/network-settings";

export const auditQuerySchema = z.object({
  entityType: z.string().trim().min(1).optional(),
  action: z.string().trim().min(1).optional(),
  since: z.coerce.date().optional(),
  limit: z.coerce.number().int().min(1).max(10_000).default(200),
});

/** The audit trail, newest first (coordinator only). */
export async function listAuditEntries(db: Db, actor: Actor, query: z.infer<typeof auditQuerySchema>) {
  authorize(actor, "audit.read", {}, await readNetworkSettings(db));
  return db.auditEntry.findMany({
    where: {
      ...(query.entityType ? { entityType: query.entityType } : {}),
      ...(query.action ? { action: query.action } : {}),
      ...(query.since ? { at: { gte: query.since } } : {}),
    },
    orderBy: { id: "desc" },
    take: query.limit,
  });
}
