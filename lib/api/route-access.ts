import type { Db } from "../db/client";
import { AppError } from "../errors/app-error";
import { ACTION_ACCESS, type Action } from "../auth/policy";

/**
 * Who may call a route, declared beside its schemas in the registry (routes.ts) and enforced by
 * handleRoute before the handler runs. Every route must declare one (RouteDefinition.access is
 * required); the policy (lib/auth/policy.ts) decides.
 *
 * - public: anyone, signed in or not (only the API's own description).
 * - network: a policy action about the network as a whole (save an analysis, read pooled results).
 * - site: a policy action about one site, found by `site` from the request.
 * - rows: a list of per-site rows; any signed-in account may call it, and the handler is given the
 *   sites whose rows the caller may read with `action` (see readableSites).
 */
export type RouteAccess =
  | { scope: "public"; why: string }
  | { scope: "network"; action: Action }
  | { scope: "site"; action: Action; site: SiteLocator }
  | { scope: "rows"; action: Action };

/** Where a route's target site is named in the request. */
export type SiteLocator =
  /** A path parameter holding the site code (/sites/{code}). */
  | { from: "path"; param: string }
  /** A field of the JSON body, or a text field of the multipart form, holding the site code. */
  | { from: "body"; field: string }
  /** A path parameter holding a submission id: the target is the submission's site. */
  | { from: "submission"; param: string };

/** What the request carried, parsed, for finding the target site. */
export interface LocatorInput {
  params: unknown;
  /** The JSON body, or the text fields of a multipart form. */
  body: unknown;
}

function field(value: unknown, name: string): unknown {
  return value && typeof value === "object" ? (value as Record<string, unknown>)[name] : undefined;
}

async function siteByCode(db: Db, code: unknown, fieldName: string): Promise<number> {
  if (typeof code !== "string" || code.trim() === "") {
    throw new AppError("invalid_input", `name the site: ${fieldName} is required`, [{ field: fieldName, message: "required" }]);
  }
  const site = await db.site.findUnique({ where: { code: code.trim() }, select: { id: true } });
  if (!site) throw new AppError("not_found", `site code ${code} is not in this network`, [{ field: fieldName, message: "unknown site", value: code }]);
  return site.id;
}

/**
 * The id of the site a site-scoped route acts on. Throws AppError invalid_input when the request
 * does not name it, not_found when the site (or submission) does not exist.
 */
export async function resolveTargetSite(db: Db, locator: SiteLocator, input: LocatorInput): Promise<number> {
  switch (locator.from) {
    case "path":
      return siteByCode(db, field(input.params, locator.param), `path.${locator.param}`);
    case "body":
      return siteByCode(db, field(input.body, locator.field), locator.field);
    case "submission": {
      const id = field(input.params, locator.param);
      const submission = typeof id === "number" ? await db.submission.findUnique({ where: { id }, select: { siteId: true } }) : null;
      if (!submission) {
        throw new AppError("not_found", `submission ${String(id)} does not exist`, [{ field: `path.${locator.param}`, message: "unknown submission", value: String(id) }]);
      }
      return submission.siteId;
    }
  }
}

function locatorWords(locator: SiteLocator): string {
  switch (locator.from) {
    case "path":
      return `the site named by the path parameter ${locator.param}`;
    case "body":
      return `the site named by the field ${locator.field}`;
    case "submission":
      return "the submission's site";
  }
}

/** The access rule of a route in words, for its OpenAPI description. */
export function describeAccess(access: RouteAccess): string {
  switch (access.scope) {
    case "public":
      return `Access: anyone, without signing in (${access.why}).`;
    case "network":
      return `Access: ${ACTION_ACCESS[access.action]} (${access.action}).`;
    case "site":
      return `Access: ${ACTION_ACCESS[access.action]} (${access.action}); the site is ${locatorWords(access.site)}.`;
    case "rows":
      return `Access: any signed-in account; the rows listed are those of sites the caller may read: ${ACTION_ACCESS[access.action]} (${access.action}). Naming a site or submission whose rows the caller may not read is refused (403).`;
  }
}
