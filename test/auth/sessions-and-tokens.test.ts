import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";
import { hashPassword } from "@/lib/auth/password";
import { endAllSessions, resolveSession, startSession, SESSION_IDLE_TIMEOUT_MS, SESSION_MAX_AGE_MS } from "@/lib/auth/sessions";
import { signIn } from "@/lib/auth/sign-in";
import { MAX_FAILURES_PER_ACCOUNT, MAX_FAILURES_PER_ADDRESS, SIGN_IN_WINDOW_MS } from "@/lib/auth/sign-in-rate-limit";
import { createApiToken, resolveApiToken, revokeApiToken } from "@/lib/auth/api-tokens";
import { actorForUser } from "@/lib/auth/actor";
import { createFirstCoordinator, needsFirstCoordinator } from "@/lib/auth/create-first-coordinator";

const providers = await testProviders();

describe.each(providers)("sessions, sign-in and API tokens on %s", (provider) => {
  let database: TestDatabase;
  let leadId: number;
  let siteId: number;
  const t0 = new Date("2026-06-01T08:00:00Z");
  const at = (ms: number) => new Date(t0.getTime() + ms);

  beforeAll(async () => {
    database = await createTestDatabase(provider);
    const { db } = database;
    expect(await needsFirstCoordinator(db)).toBe(true);
    await createFirstCoordinator(db, { email: "coord@example.org", displayName: "Coordinator", password: "coordinator-pass" });
    expect(await needsFirstCoordinator(db)).toBe(false);
    await expect(createFirstCoordinator(db, { email: "x@example.org", displayName: "X", password: "another-pass-1" })).rejects.toThrow(/already has accounts/);
    const lead = await db.user.create({ data: { email: "lead@example.org", displayName: "Lead", role: "site_lead", passwordHash: await hashPassword("lead-password") } });
    leadId = lead.id;
    const species = await db.species.create({ data: { scientificName: "Cyanistes caeruleus", commonName: "Blue tit" } });
    siteId = (await db.site.create({ data: { code: "ASH", name: "Ash Test", speciesId: species.id, latitude: 51, longitude: 0, firstYear: 2000, lastYear: 2010, leadUserId: lead.id } })).id;
  });
  afterAll(async () => database.drop());

  it("signs in with the right password, rotating the session the browser held before", async () => {
    const { db } = database;
    const planted = await startSession(db, leadId, undefined, t0);
    const session = await signIn(db, { email: "lead@example.org", password: "lead-password" }, { address: "10.0.0.1", previousSecret: planted.secret, now: t0 });
    expect(session.secret).not.toBe(planted.secret);
    expect(await resolveSession(db, planted.secret, t0)).toBeNull();
    const actor = await resolveSession(db, session.secret, t0);
    expect(actor).toMatchObject({ userId: leadId, role: "site_lead", siteIds: [siteId], via: "session" });
    expect(await db.auditEntry.count({ where: { action: "user.sign_in", actorUserId: leadId } })).toBe(1);
  });

  it("ends a session after inactivity, and at its maximum age even when active", async () => {
    const { db } = database;
    const idle = await startSession(db, leadId, undefined, t0);
    expect(await resolveSession(db, idle.secret, at(SESSION_IDLE_TIMEOUT_MS - 1000))).not.toBeNull();
    // Activity at the line above moved lastSeenAt; idle for the whole timeout after it ends the session.
    expect(await resolveSession(db, idle.secret, at(2 * SESSION_IDLE_TIMEOUT_MS))).toBeNull();

    const active = await startSession(db, leadId, undefined, t0);
    let now = t0.getTime();
    while (now < t0.getTime() + SESSION_MAX_AGE_MS - SESSION_IDLE_TIMEOUT_MS) {
      now += SESSION_IDLE_TIMEOUT_MS / 2;
      expect(await resolveSession(db, active.secret, new Date(now))).not.toBeNull();
    }
    expect(await resolveSession(db, active.secret, at(SESSION_MAX_AGE_MS + 1))).toBeNull();
  });

  it("signs a user out everywhere", async () => {
    const { db } = database;
    const a = await startSession(db, leadId, undefined, t0);
    const b = await startSession(db, leadId, undefined, t0);
    expect(await endAllSessions(db, leadId)).toBeGreaterThanOrEqual(2);
    expect(await resolveSession(db, a.secret, t0)).toBeNull();
    expect(await resolveSession(db, b.secret, t0)).toBeNull();
  });

  it("refuses a wrong password with the same words as an unknown account, and limits failures per account", async () => {
    const { db } = database;
    const later = at(10 * SIGN_IN_WINDOW_MS);
    await expect(signIn(db, { email: "nobody@example.org", password: "x" }, { address: "10.0.0.2", now: later })).rejects.toThrow("email or password is not right");
    for (let i = 0; i < MAX_FAILURES_PER_ACCOUNT; i += 1) {
      await expect(signIn(db, { email: "lead@example.org", password: "wrong" }, { address: `10.0.1.${i}`, now: later })).rejects.toThrow("email or password is not right");
    }
    // Even the right password is refused while the account is limited...
    await expect(signIn(db, { email: "lead@example.org", password: "lead-password" }, { address: "10.0.2.1", now: later })).rejects.toThrow(/too many failed sign-ins/);
    // ...and accepted once the failures leave the window.
    const afterWindow = new Date(later.getTime() + SIGN_IN_WINDOW_MS + 1000);
    await expect(signIn(db, { email: "lead@example.org", password: "lead-password" }, { address: "10.0.2.1", now: afterWindow })).resolves.toMatchObject({ userId: leadId });
  });

  it("limits failures per address too, across accounts, without locking out other addresses", async () => {
    const { db } = database;
    const later = at(40 * SIGN_IN_WINDOW_MS);
    // One address trying many accounts: each account stays under its own limit.
    for (let i = 0; i < MAX_FAILURES_PER_ADDRESS; i += 1) {
      await expect(signIn(db, { email: `guess${i}@example.org`, password: "x" }, { address: "192.0.2.7", now: later })).rejects.toThrow("email or password is not right");
    }
    await expect(signIn(db, { email: "lead@example.org", password: "lead-password" }, { address: "192.0.2.7", now: later })).rejects.toThrow(/too many failed sign-ins/);
    await expect(signIn(db, { email: "lead@example.org", password: "lead-password" }, { address: "192.0.2.8", now: later })).resolves.toMatchObject({ userId: leadId });
    // A refused attempt is not checked against the password at all, and is not counted as a success.
    expect(await db.signInAttempt.count({ where: { address: "192.0.2.7", succeeded: true } })).toBe(0);
  });

  it("creates API tokens shown once, scoped to their user, and revocable", async () => {
    const { db } = database;
    const actor = (await actorForUser(db, leadId, "session"))!;
    const token = await createApiToken(db, actor, { name: "nightly upload" });
    expect(token.secret.startsWith("ppt_")).toBe(true);
    const stored = await db.apiToken.findUniqueOrThrow({ where: { id: token.id } });
    expect(stored.tokenHash).not.toContain(token.secret);
    const viaToken = await resolveApiToken(db, token.secret, t0);
    expect(viaToken).toMatchObject({ userId: leadId, role: "site_lead", siteIds: [siteId], via: "token" });
    expect((await db.apiToken.findUniqueOrThrow({ where: { id: token.id } })).lastUsedAt).toEqual(t0);
    // The last use is recorded to the minute, so a busy script's requests are not all writes.
    await resolveApiToken(db, token.secret, new Date(t0.getTime() + 30_000));
    expect((await db.apiToken.findUniqueOrThrow({ where: { id: token.id } })).lastUsedAt).toEqual(t0);
    const later = new Date(t0.getTime() + 61_000);
    await resolveApiToken(db, token.secret, later);
    expect((await db.apiToken.findUniqueOrThrow({ where: { id: token.id } })).lastUsedAt).toEqual(later);
    await revokeApiToken(db, actor, token.id, t0);
    expect(await resolveApiToken(db, token.secret, t0)).toBeNull();
    expect(await resolveApiToken(db, "ppt_not-a-token", t0)).toBeNull();
    expect(await db.auditEntry.count({ where: { entityType: "ApiToken", entityId: String(token.id) } })).toBe(2);
  });
});
