import type { Db } from "../db/client";
import { ANONYMOUS, type Actor } from "./actor";
import { resolveSession } from "./sessions";
import { resolveApiToken } from "./api-tokens";

export interface Credentials {
  /** The session cookie's value, if the request carried one. */
  sessionSecret?: string | null;
  /** The Authorization header, if any ("Bearer ppt_..."). */
  authorization?: string | null;
}

/**
 * Who a request comes from: a bearer API token wins over a session cookie; neither gives the
 * anonymous actor. A token or session that is unknown, revoked or expired is anonymous too.
 */
export async function resolveActor(db: Db, credentials: Credentials, now = new Date()): Promise<Actor> {
  const bearer = credentials.authorization?.match(/^Bearer\s+(\S+)$/i)?.[1];
  if (bearer) return (await resolveApiToken(db, bearer, now)) ?? ANONYMOUS;
  if (credentials.sessionSecret) return (await resolveSession(db, credentials.sessionSecret, now)) ?? ANONYMOUS;
  return ANONYMOUS;
}
