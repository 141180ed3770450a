import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";
import { createTestDatabase, type TestDatabase } from "@/test/helpers/test-databases";
import { startSession } from "@/lib/auth/sessions";
import { getDb } from "@/lib/db/client";
import { readNetworkSettings } from "@/lib/settings/network-settings";
import type { FormState } from "@/app/_server/form-state";

/**
 * Server actions are public endpoints: anyone can POST to them whatever the page shows. Each one
 * that changes data asks requireActionActor first. These tests call the real helpers and the real
 * server actions of the accounts pages with the request's cookies and headers (next/headers)
 * replaced by a test double, against a throwaway SQLite database.
 */
const request = vi.hoisted(() => ({ sessionSecret: null as string | null, headers: new Headers() }));
vi.mock("server-only", () => ({}));
vi.mock("next/cache", () => ({ revalidatePath: () => undefined }));
vi.mock("next/headers", () => ({
  cookies: async () => ({
    get: (name: string) => (name === "phenopool_session" && request.sessionSecret ? { name, value: request.sessionSecret } : undefined),
    set: () => undefined,
    delete: () => undefined,
  }),
  headers: async () => request.headers,
}));

const { requireActionActor, requirePageActor } = await import("@/app/_server/current-actor");
const { createUserAction, updateUserAction } = await import("@/app/admin/users/actions");
const { updateSettingsAction } = await import("@/app/admin/settings/actions");
const { createTokenAction, revokeTokenAction } = await import("@/app/account/tokens/actions");

type Role = "coordinator" | "site_lead" | "viewer" | "anonymous";
const EMPTY: FormState = { message: null, fieldErrors: [] };

function form(values: Record<string, string | string[]>): FormData {
  const data = new FormData();
  for (const [name, value] of Object.entries(values)) for (const v of [value].flat()) data.append(name, v);
  return data;
}

describe("server actions and their authorization helpers", () => {
  let database: TestDatabase;
  const sessions = {} as Record<Role, string | null>;
  const userIds = {} as Record<Exclude<Role, "anonymous">, number>;
  let counter = 0;

  const signInAs = (role: Role) => {
    request.sessionSecret = sessions[role];
  };

  beforeAll(async () => {
    database = await createTestDatabase("sqlite");
    process.env.DATABASE_URL = database.url;
    const { db } = database;
    for (const role of ["coordinator", "site_lead", "viewer"] as const) {
      userIds[role] = (await db.user.create({ data: { email: `${role}@example.org`, displayName: role, role } })).id;
      sessions[role] = (await startSession(db, userIds[role])).secret;
    }
    sessions.anonymous = null;
    const species = await db.species.create({ data: { scientificName: "Parus major", commonName: "Great tit" } });
    await db.site.create({ data: { code: "OWN", name: "Own", speciesId: species.id, latitude: 51, longitude: 5, firstYear: 2000, lastYear: 2020, leadUserId: userIds.site_lead } });
  });
  beforeEach(() => {
    request.headers = new Headers({ host: "pool.example.org", origin: "https://pool.example.org", "sec-fetch-site": "same-origin" });
  });
  afterAll(async () => {
    await getDb().$disconnect();
    await database.drop();
  });

  it("requireActionActor returns the signed-in actor the policy allows, and throws the policy's refusal otherwise", async () => {
    signInAs("coordinator");
    expect(await requireActionActor("user.manage")).toMatchObject({ userId: userIds.coordinator, role: "coordinator" });
    signInAs("site_lead");
    const siteId = (await database.db.site.findUniqueOrThrow({ where: { code: "OWN" } })).id;
    expect(await requireActionActor("submission.create", { siteId })).toMatchObject({ userId: userIds.site_lead });
    await expect(requireActionActor("submission.create", { siteId: siteId + 100 })).rejects.toMatchObject({ code: "forbidden", message: "site leads may change only their own sites" });
    signInAs("viewer");
    await expect(requireActionActor("settings.manage")).rejects.toMatchObject({ code: "forbidden", message: "only the coordinator may settings manage" });
    signInAs("anonymous");
    await expect(requireActionActor("token.manage_own")).rejects.toMatchObject({ code: "unauthenticated" });
  });

  it("requireActionActor refuses a cross-site POST even from the coordinator's browser", async () => {
    signInAs("coordinator");
    request.headers = new Headers({ host: "pool.example.org", origin: "https://elsewhere.example", "sec-fetch-site": "cross-site" });
    await expect(requireActionActor("user.manage")).rejects.toMatchObject({ code: "forbidden", message: expect.stringMatching(/^cross-site request refused/) });
    request.headers = new Headers({ host: "pool.example.org", origin: "https://elsewhere.example" });
    await expect(requireActionActor("user.manage")).rejects.toMatchObject({ code: "forbidden" });
  });

  it("requirePageActor sends a visitor who is not signed in to the sign-in page, and a signed-in one the policy refuses to the refusal page", async () => {
    const redirectOf = async (action: Parameters<typeof requirePageActor>[0]) => ((await requirePageActor(action).catch((error: unknown) => error)) as { digest?: string }).digest;
    signInAs("anonymous");
    expect(await redirectOf("network.read")).toMatch(/^NEXT_REDIRECT;.*;\/sign-in;/);
    signInAs("viewer");
    expect(await redirectOf("audit.read")).toMatch(/^NEXT_REDIRECT;.*;\/refused\?action=audit\.read;/);
    expect(await requirePageActor("network.read")).toMatchObject({ role: "viewer" });
  });

  type Verdict = "allow" | "deny";
  /** [action, audit action, its form, coordinator, site lead, viewer, anonymous] */
  const ACTIONS_MATRIX: Array<[string, string, () => Promise<FormState>, Verdict, Verdict, Verdict, Verdict]> = [
    [
      "create an account",
      "user.create",
      () => createUserAction(EMPTY, form({ email: `new${(counter += 1)}@example.org`, displayName: "New", role: "viewer", password: "a-long-password" })),
      "allow", "deny", "deny", "deny",
    ],
    [
      "change an account's role and sites",
      "user.update",
      () => updateUserAction(EMPTY, form({ userId: String(userIds.site_lead), role: "site_lead", active: "on", leadsSites: ["OWN"] })),
      "allow", "deny", "deny", "deny",
    ],
    [
      "change the visibility settings",
      "settings.update",
      () => updateSettingsAction(EMPTY, form({ pooled_results_visible: "on" })),
      "allow", "deny", "deny", "deny",
    ],
    ["create an API token", "api_token.create", () => createTokenAction({ ...EMPTY, created: null }, form({ name: `script ${(counter += 1)}` })), "allow", "allow", "allow", "deny"],
  ];

  it.each(ACTIONS_MATRIX.flatMap(([name, audited, run, ...verdicts]) => (["coordinator", "site_lead", "viewer", "anonymous"] as const).map((role, i) => [name, role, verdicts[i]!, audited, run] as const)))(
    "%s as %s: %s",
    async (_name, role, verdict, audited, run) => {
      signInAs(role);
      const lastId = (await database.db.auditEntry.findFirst({ orderBy: { id: "desc" }, select: { id: true } }))?.id ?? 0;
      const state = await run();
      const written = await database.db.auditEntry.findMany({ where: { id: { gt: lastId } } });
      if (verdict === "allow") {
        expect(state.message, JSON.stringify(state)).toBeNull();
        expect(written.map((e) => [e.action, e.actorUserId])).toEqual([[audited, role === "anonymous" ? null : userIds[role]]]);
      } else {
        expect(state.message).toMatch(role === "anonymous" ? /sign in first/ : /only the coordinator may/);
        expect(written).toEqual([]);
      }
    },
  );

  it("shows a new token once, lists it, and lets only its owner (or the coordinator) revoke it", async () => {
    signInAs("viewer");
    const created = await createTokenAction({ ...EMPTY, created: null }, form({ name: "once" }));
    expect(created.created?.secret).toMatch(/^ppt_/);
    const token = await database.db.apiToken.findFirstOrThrow({ where: { name: "once" } });
    expect(token.tokenHash).not.toBe(created.created!.secret);
    signInAs("site_lead");
    expect((await revokeTokenAction(EMPTY, form({ tokenId: String(token.id) }))).message).toBe(`no API token ${token.id}`);
    expect((await database.db.apiToken.findUniqueOrThrow({ where: { id: token.id } })).revokedAt).toBeNull();
    signInAs("viewer");
    expect((await revokeTokenAction(EMPTY, form({ tokenId: String(token.id) }))).done).toMatch(/revoked/);
    expect((await database.db.apiToken.findUniqueOrThrow({ where: { id: token.id } })).revokedAt).not.toBeNull();
  });

  it("parses each form at the edge: a bad value is named, and nothing changes", async () => {
    signInAs("coordinator");
    const before = await database.db.auditEntry.count();
    const bad = await createUserAction(EMPTY, form({ email: "not an email", displayName: "", role: "admin", password: "short" }));
    expect(bad.fieldErrors.map((e) => e.field).sort()).toEqual(["displayName", "email", "password", "role"]);
    const unknownSite = await updateUserAction(EMPTY, form({ userId: String(userIds.viewer), role: "viewer", active: "on", leadsSites: ["NOPE"] }));
    expect(unknownSite.message).toMatch(/unknown site codes: NOPE/);
    expect(await database.db.auditEntry.count()).toBe(before);
    const settings = await updateSettingsAction(EMPTY, form({ other_sites_raw_records_visible: "on" }));
    expect(settings.done).toBe("Settings saved.");
    expect(await readNetworkSettings(database.db)).toMatchObject({ pooled_results_visible: false, other_sites_raw_records_visible: true });
    const entry = await database.db.auditEntry.findFirstOrThrow({ where: { action: "settings.update" }, orderBy: { id: "desc" } });
    expect(JSON.parse(entry.summary)).toEqual({
      before: { pooled_results_visible: true, other_sites_raw_records_visible: false },
      after: { pooled_results_visible: false, other_sites_raw_records_visible: true },
    });
  });
});
