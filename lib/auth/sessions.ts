import type { Db } from "../db/client";
import { hashSecret, newSecret } from "./secret-token";
import { actorForUser, type Actor } from "./actor";

/** A session ends after this long without a request... */
export const SESSION_IDLE_TIMEOUT_MS = 8 * 60 * 60 * 1000;
/** ...and after this long whatever its activity. */
export const SESSION_MAX_AGE_MS = 14 * 24 * 60 * 60 * 1000;
/** lastSeenAt is written at most this often, to keep reads cheap. */
const TOUCH_INTERVAL_MS = 60 * 1000;

export const SESSION_COOKIE = "phenopool_session";

export interface NewSession {
  /** The cookie value: shown to the browser once, stored only as a hash. */
  secret: string;
  expiresAt: Date;
}

/**
 * Starts a session for a user. `previousSecret` is the cookie the browser held before signing in:
 * that session is ended, so a session id planted before sign-in is never promoted (rotation).
 */
export async function startSession(db: Db, userId: number, previousSecret?: string, now = new Date()): Promise<NewSession> {
  const secret = newSecret("pps_");
  const expiresAt = new Date(now.getTime() + SESSION_MAX_AGE_MS);
  await db.$transaction(async (tx) => {
    if (previousSecret) await tx.session.deleteMany({ where: { tokenHash: hashSecret(previousSecret) } });
    await tx.session.create({ data: { tokenHash: hashSecret(secret), userId, createdAt: now, lastSeenAt: now, expiresAt } });
  });
  return { secret, expiresAt };
}

/** The actor of a live session, or null when the secret is unknown, idle too long, expired or the user inactive. */
export async function resolveSession(db: Db, secret: string, now = new Date()): Promise<Actor | null> {
  const session = await db.session.findUnique({ where: { tokenHash: hashSecret(secret) } });
  if (!session) return null;
  const idleFor = now.getTime() - session.lastSeenAt.getTime();
  if (session.expiresAt <= now || idleFor > SESSION_IDLE_TIMEOUT_MS) {
    await db.session.deleteMany({ where: { id: session.id } });
    return null;
  }
  if (idleFor > TOUCH_INTERVAL_MS) await db.session.update({ where: { id: session.id }, data: { lastSeenAt: now } });
  return actorForUser(db, session.userId, "session");
}

export async function endSession(db: Db, secret: string): Promise<void> {
  await db.session.deleteMany({ where: { tokenHash: hashSecret(secret) } });
}

/** Signs a user out everywhere: every session of theirs ends. Returns how many ended. */
export async function endAllSessions(db: Db, userId: number): Promise<number> {
  const { count } = await db.session.deleteMany({ where: { userId } });
  return count;
}
