import type { Db } from "../db/client";

export type RoleName = "coordinator" | "site_lead" | "viewer";

/** Who is asking: every authorization decision is made about an actor. */
export interface Actor {
  kind: "user" | "anonymous";
  userId: number | null;
  role: RoleName | null;
  /** Display name for the audit trail. */
  label: string;
  /** Ids of the sites this user leads (their "own" sites). */
  siteIds: readonly number[];
  /** How the request authenticated. */
  via: "session" | "token" | "none";
}

export const ANONYMOUS: Actor = { kind: "anonymous", userId: null, role: null, label: "anonymous", siteIds: [], via: "none" };

/** The actor for an active user id, with the sites they lead; null for an unknown or inactive user. */
export async function actorForUser(db: Db, userId: number, via: Actor["via"]): Promise<Actor | null> {
  const user = await db.user.findUnique({ where: { id: userId }, include: { sitesLed: { select: { id: true } } } });
  if (!user || !user.active) return null;
  return { kind: "user", userId: user.id, role: user.role, label: `${user.displayName} <${user.email}>`, siteIds: user.sitesLed.map((s) => s.id), via };
}
