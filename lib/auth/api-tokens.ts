import { z } from "zod";
import type { Db } from "../db/client";
import { AppError } from "../errors/app-error";
import { hashSecret, newSecret } from "./secret-token";
import { actorForUser, type Actor } from "./actor";
import { recordAudit } from "../audit/record-audit";

/** Tokens start with this, so a leaked one is recognisable in logs and scanners. */
export const API_TOKEN_PREFIX = "ppt_";

export const createApiTokenSchema = z.object({ name: z.string().trim().min(1, "name the token").max(100) });

export interface CreatedApiToken {
  id: number;
  name: string;
  /** The token itself: shown once, never stored. */
  secret: string;
  prefix: string;
}

/** Creates a token for the actor; it acts with the actor's role on the actor's sites. */
export async function createApiToken(db: Db, actor: Actor, input: z.infer<typeof createApiTokenSchema>): Promise<CreatedApiToken> {
  if (actor.userId === null) throw new AppError("unauthenticated", "sign in to create an API token");
  const secret = newSecret(API_TOKEN_PREFIX);
  const prefix = secret.slice(0, API_TOKEN_PREFIX.length + 6);
  return db.$transaction(async (tx) => {
    const token = await tx.apiToken.create({ data: { userId: actor.userId!, name: input.name, tokenHash: hashSecret(secret), prefix } });
    await recordAudit(tx, actor, { action: "api_token.create", entityType: "ApiToken", entityId: token.id, after: { name: input.name, prefix } });
    return { id: token.id, name: token.name, secret, prefix };
  });
}

/** Revokes one of the actor's own tokens (a coordinator may revoke anyone's). */
export async function revokeApiToken(db: Db, actor: Actor, tokenId: number, now = new Date()): Promise<void> {
  const token = await db.apiToken.findUnique({ where: { id: tokenId } });
  if (!token || (token.userId !== actor.userId && actor.role !== "coordinator")) throw new AppError("not_found", `no API token ${tokenId}`);
  if (token.revokedAt) return;
  await db.$transaction(async (tx) => {
    await tx.apiToken.update({ where: { id: tokenId }, data: { revokedAt: now } });
    await recordAudit(tx, actor, { action: "api_token.revoke", entityType: "ApiToken", entityId: tokenId, before: { name: token.name, prefix: token.prefix } }, now);
  });
}

/** lastUsedAt is written at most this often: a script's every request would otherwise be a write. */
const LAST_USED_INTERVAL_MS = 60 * 1000;

/** The actor a bearer token stands for, or null for an unknown or revoked token. Records its last use (to the minute). */
export async function resolveApiToken(db: Db, secret: string, now = new Date()): Promise<Actor | null> {
  if (!secret.startsWith(API_TOKEN_PREFIX)) return null;
  const token = await db.apiToken.findUnique({ where: { tokenHash: hashSecret(secret) } });
  if (!token || token.revokedAt) return null;
  if (!token.lastUsedAt || now.getTime() - token.lastUsedAt.getTime() >= LAST_USED_INTERVAL_MS) {
    await db.apiToken.update({ where: { id: token.id }, data: { lastUsedAt: now } });
  }
  return actorForUser(db, token.userId, "token");
}

export async function listApiTokens(db: Db, userId: number) {
  return db.apiToken.findMany({
    where: { userId },
    orderBy: { createdAt: "desc" },
    select: { id: true, name: true, prefix: true, createdAt: true, lastUsedAt: true, revokedAt: true },
  });
}
