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

/** Throws unauthenticated (no actor) or forbidden (with the reason) unless the policy allows. */
export function authorize(actor: Actor, action: Action, target: ActionTarget, visibility: Visibility): void {
  const decision = decide(actor, action, target, visibility);
  if (decision.allowed) return;
  if (actor.kind === "anonymous") throw new AppError("unauthenticated", decision.reason);
  throw new AppError("forbidden", decision.reason);
}
