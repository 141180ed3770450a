import { describe, expect, it } from "vitest";
import { ACTIONS, decide, authorize, type Action } from "@/lib/auth/policy";
import { ANONYMOUS, type Actor } from "@/lib/auth/actor";
import { AppError } from "@/lib/errors/app-error";

const OWN = 1;
const OTHER = 2;
const coordinator: Actor = { kind: "user", userId: 10, role: "coordinator", label: "c", siteIds: [], via: "session" };
const lead: Actor = { kind: "user", userId: 11, role: "site_lead", label: "l", siteIds: [OWN], via: "session" };
const viewer: Actor = { kind: "user", userId: 12, role: "viewer", label: "v", siteIds: [], via: "session" };
const defaults = { pooled_results_visible: true, other_sites_raw_records_visible: false };

type Expect = "allow" | "deny";
/** The role matrix of the accounts specification: [action, coordinator, lead own site, lead other site, viewer]. */
const MATRIX: Array<[Action, Expect, Expect, Expect, Expect]> = [
  ["network.read", "allow", "allow", "allow", "allow"],
  ["site.create", "allow", "deny", "deny", "deny"],
  ["site.update", "allow", "allow", "deny", "deny"],
  ["site.delete", "allow", "deny", "deny", "deny"],
  ["submission.create", "allow", "allow", "deny", "deny"],
  ["submission.restore", "allow", "allow", "deny", "deny"],
  ["submission.delete", "allow", "allow", "deny", "deny"],
  ["raw_records.read", "allow", "allow", "deny", "deny"],
  ["pooled_results.read", "allow", "allow", "allow", "allow"],
  ["analysis.save", "allow", "deny", "deny", "deny"],
  ["analysis.run", "allow", "deny", "deny", "deny"],
  ["moderator.manage", "allow", "deny", "deny", "deny"],
  ["user.manage", "allow", "deny", "deny", "deny"],
  ["settings.manage", "allow", "deny", "deny", "deny"],
  ["audit.read", "allow", "deny", "deny", "deny"],
  ["network.export", "allow", "deny", "deny", "deny"],
  ["token.manage_own", "allow", "allow", "allow", "allow"],
];

const verdict = (actor: Actor, action: Action, siteId: number, visibility = defaults): Expect =>
  decide(actor, action, { siteId }, visibility).allowed ? "allow" : "deny";

describe("authorization policy", () => {
  it("covers every action in the matrix", () => {
    expect(MATRIX.map((row) => row[0]).sort()).toEqual([...ACTIONS].sort());
  });

  it.each(MATRIX)("%s: coordinator %s, own-site lead %s, other-site lead %s, viewer %s", (action, c, own, other, v) => {
    expect(verdict(coordinator, action, OWN)).toBe(c);
    expect(verdict(lead, action, OWN)).toBe(own);
    expect(verdict(lead, action, OTHER)).toBe(other);
    expect(verdict(viewer, action, OTHER)).toBe(v);
    expect(verdict(ANONYMOUS, action, OWN)).toBe("deny");
  });

  it("follows the network's visibility settings", () => {
    const closed = { pooled_results_visible: false, other_sites_raw_records_visible: false };
    const open = { pooled_results_visible: true, other_sites_raw_records_visible: true };
    expect(verdict(viewer, "pooled_results.read", OWN, closed)).toBe("deny");
    expect(verdict(coordinator, "pooled_results.read", OWN, closed)).toBe("allow");
    expect(verdict(lead, "raw_records.read", OTHER, open)).toBe("allow");
    expect(verdict(viewer, "raw_records.read", OTHER, open)).toBe("allow");
  });

  it("refuses a site-scoped action without a site, for everyone but the coordinator", () => {
    expect(decide(lead, "submission.create", {}, defaults)).toEqual({ allowed: false, reason: "submission.create needs a site" });
  });

  it("throws unauthenticated for anonymous callers and forbidden with the reason for others", () => {
    expect(() => authorize(ANONYMOUS, "network.read", {}, defaults)).toThrow(expect.objectContaining({ code: "unauthenticated" }) as AppError);
    expect(() => authorize(lead, "submission.create", { siteId: OTHER }, defaults)).toThrow("site leads may change only their own sites");
  });
});
