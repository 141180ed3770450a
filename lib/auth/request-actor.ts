import type { Actor } from "./actor";

/**
 * Who sent an API request. Every mutating route handler calls this once, before it changes
 * anything, and passes the actor on to the use case: it is the single place where signing in
 * (session cookie, API token) and role checks attach to the JSON API.
 *
 * Until the API resolves sessions and tokens, every request acts as an unnamed coordinator:
 * no user id (so nothing is attributed to an account) and full rights.
 */
export async function requestActor(_request: Request): Promise<Actor> {
  return { kind: "anonymous", userId: null, role: "coordinator", label: "API (sign-in not yet required)", siteIds: [], via: "none" };
}
