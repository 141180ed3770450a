import type { Actor } from "./actor";
import type { NetworkSettings } from "../settings/network-settings";
import { AppError } from "../errors/app-error";

/**
 * The one authorization policy. Every page, server action, route handler and CLI command that
 * reads or changes network data asks `authorize` first; nothing is checked only in the browser.
 *
 * Roles: coordinator (everything), site lead (their own sites' submissions and metadata; reads
 * pooled results), viewer (read only). Visibility of pooled results and of other sites' raw
 * records to site leads and viewers is a network setting.
 */
export const ACTIONS = [
  "network.read",
  "site.create",
  "site.update",
  "site.delete",
  "submission.create",
  "submission.restore",
  "submission.delete",
  "raw_records.read",
  "pooled_results.read",
  "analysis.save",
  "analysis.run",
  "moderator.manage",
  "user.manage",
  "settings.manage",
  "audit.read",
  "network.export",
  "token.manage_own",
] as const;
export type Action = (typeof ACTIONS)[number];

/** The site an action is about, for actions on one site. */
export interface ActionTarget {
  siteId?: number;
}

export type Decision = { allowed: true } | { allowed: false; reason: string };

type Visibility = Pick<NetworkSettings, "pooled_results_visible" | "other_sites_raw_records_visible">;

const ALLOW: Decision = { allowed: true };
const deny = (reason: string): Decision => ({ allowed: false, reason });

const SITE_SCOPED: ReadonlySet<Action> = new Set(["site.update", "submission.create", "submission.restore", "submission.delete", "raw_records.read"]);

export function decide(actor: Actor, action: Action, target: ActionTarget, visibility: Visibility): Decision {
  if (actor.kind === "anonymous" || actor.role === null) return deny("sign in first");
  if (actor.role === "coordinator") return ALLOW;
  if (SITE_SCOPED.has(action) && target.siteId === undefined) {
    return deny(`${action} needs a site`);
  }
  const ownSite = target.siteId !== undefined && actor.siteIds.includes(target.siteId);
  switch (action) {
    case "network.read":
    case "token.manage_own":
      return ALLOW;
    case "pooled_results.read":
      return visibility.pooled_results_visible ? ALLOW : deny("pooled results are visible to the coordinator only in this network");
    case "raw_records.read":
      if (ownSite && actor.role === "site_lead") return ALLOW;
      return visibility.other_sites_raw_records_visible ? ALLOW : deny("other sites' brood records are not shared in this network");
    case "site.update":
    case "submission.create":
    case "submission.restore":
    case "submission.delete":
      if (actor.role !== "site_lead") return deny("viewers have read-only access");
      return ownSite ? ALLOW : deny("site leads may change only their own sites");
    default:
      return deny(`only the coordinator may ${action.replace(/[._]/g, " ")}`);
  }
}

/** Who may do each action, in words: for the API description and the pages' explanations. */
export const ACTION_ACCESS: Readonly<Record<Action, string>> = {
  "network.read": "any signed-in account",
  "site.create": "the coordinator",
  "site.update": "the coordinator, or the site's lead",
  "site.delete": "the coordinator",
  "submission.create": "the coordinator, or the site's lead",
  "submission.restore": "the coordinator, or the site's lead",
  "submission.delete": "the coordinator, or the site's lead",
  "raw_records.read":
    "the coordinator and each site's lead for their own sites; every signed-in account when the network shares raw records (setting other_sites_raw_records_visible, off by default)",
  "pooled_results.read": "the coordinator; site leads and viewers too while the network shows pooled results (setting pooled_results_visible, on by default)",
  "analysis.save": "the coordinator",
  "analysis.run": "the coordinator",
  "moderator.manage": "the coordinator",
  "user.manage": "the coordinator",
  "settings.manage": "the coordinator",
  "audit.read": "the coordinator",
  "network.export": "the coordinator",
  "token.manage_own": "any signed-in account",
};

/** The sites whose rows an actor may read with a per-site action: every site, or only these (with the reason for the others). */
export type SiteScope = { allSites: true } | { allSites: false; siteIds: readonly number[]; reason: string };

/** No site has id 0: a site the actor certainly does not lead, to ask the policy about "other" sites. */
const SOME_OTHER_SITE = 0;

/**
 * The sites an actor may read rows of with `action` (for lists of records), derived from `decide`
 * so lists and single reads follow the same rules. Example: a site lead of site 4 in a network
 * that does not share raw records gets { allSites: false, siteIds: [4], reason }.
 */
export function readableSites(actor: Actor, action: Action, visibility: Visibility): SiteScope {
  const other = decide(actor, action, { siteId: SOME_OTHER_SITE }, visibility);
  if (other.allowed) return { allSites: true };
  return { allSites: false, siteIds: actor.siteIds.filter((siteId) => decide(actor, action, { siteId }, visibility).allowed), reason: other.reason };
}

/** Throws unauthenticated (no actor) or forbidden (with the reason) unless the policy allows. */
export function authorize(actor: Actor, action: Action, target: ActionTarget, visibility: Visibility): void {
  const decision = decide(actor, action, target, visibility);
  if (decision.allowed) return;
  if (actor.kind === "anonymous") throw new AppError("unauthenticated", decision.reason);
  throw new AppError("forbidden", decision.reason);
}
