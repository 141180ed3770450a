import type { Db } from "../db/client";
import { AppError } from "../errors/app-error";
import type { Actor } from "./actor";
import { resolveActor } from "./resolve-actor";
import { isSameOriginRequest } from "./same-origin";
import { SESSION_COOKIE } from "./sessions";

/** The value of one cookie of a Cookie header (RFC 6265 section 5.4 form: `a=1; b=2`), or null. */
export function cookieValue(cookieHeader: string | null, name: string): string | null {
  if (!cookieHeader) return null;
  for (const pair of cookieHeader.split(";")) {
    const at = pair.indexOf("=");
    if (at < 0 || pair.slice(0, at).trim() !== name) continue;
    const value = pair.slice(at + 1).trim();
    try {
      return decodeURIComponent(value);
    } catch {
      return value;
    }
  }
  return null;
}

/**
 * Refuses a request that would change data when a browser sent it from another site (cross-site
 * request forgery): see isSameOriginRequest. The host compared with Origin is the one the client
 * addressed (X-Forwarded-Host behind a proxy, else Host, else `fallbackHost`). Throws AppError forbidden.
 * Used by the API (assertSameOrigin) and by server actions, which have headers but no Request.
 */
export function assertSameOriginHeaders(method: string, headers: Pick<Headers, "get">, fallbackHost: string | null = null): void {
  const forwardedHost = headers.get("x-forwarded-host")?.split(",")[0]?.trim();
  const host = forwardedHost || headers.get("host") || fallbackHost;
  const check = { method, host, origin: headers.get("origin"), secFetchSite: headers.get("sec-fetch-site"), authorization: headers.get("authorization") };
  if (isSameOriginRequest(check)) return;
  const from = check.origin ? `from ${check.origin}` : `marked Sec-Fetch-Site: ${check.secFetchSite ?? "unknown"}`;
  throw new AppError(
    "forbidden",
    `cross-site request refused: this ${method} would change data and was sent by a browser ${from}, not from PhenoPool's own pages. ` +
      "Scripts should send an API token (Authorization: Bearer ppt_...).",
  );
}

/** assertSameOriginHeaders for an API request. */
export function assertSameOrigin(request: Request): void {
  assertSameOriginHeaders(request.method, request.headers, new URL(request.url).host);
}

/**
 * Who sent an API request: the single place where signing in attaches to the JSON API. Refuses a
 * cross-site state-changing request first (assertSameOrigin), then resolves the bearer API token
 * (`Authorization: Bearer ppt_...`) or else the session cookie (`phenopool_session`) to the
 * actor; neither gives the anonymous actor, which the policy refuses everything but public routes.
 *
 * A bearer token that is unknown, revoked or whose account was deactivated is refused outright
 * (AppError unauthenticated), so a script learns its token no longer works rather than acting
 * anonymously.
 */
export async function requestActor(db: Db, request: Request, now = new Date()): Promise<Actor> {
  assertSameOrigin(request);
  const authorization = request.headers.get("authorization");
  const actor = await resolveActor(db, { authorization, sessionSecret: cookieValue(request.headers.get("cookie"), SESSION_COOKIE) }, now);
  if (authorization && /^Bearer\s/i.test(authorization) && actor.kind === "anonymous") {
    throw new AppError("unauthenticated", "the API token in the Authorization header is not valid: it is unknown, revoked, or its account is deactivated");
  }
  return actor;
}
