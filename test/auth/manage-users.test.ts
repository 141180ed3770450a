import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";
import { createUser, createUserSchema, listUsers, updateUser } from "@/lib/users/manage-users";
import { listAuditEntries } from "@/lib/audit/list-audit";
import { actorForUser, type Actor } from "@/lib/auth/actor";
import { startSession, resolveSession } from "@/lib/auth/sessions";

const providers = await testProviders();

describe.each(providers)("managing accounts on %s", (provider) => {
  let database: TestDatabase;
  let coordinator: Actor;
  beforeAll(async () => {
    database = await createTestDatabase(provider);
    const { db } = database;
    const user = await db.user.create({ data: { email: "c@example.org", displayName: "Coord", role: "coordinator" } });
    coordinator = (await actorForUser(db, user.id, "session"))!;
    const species = await db.species.create({ data: { scientificName: "Parus major", commonName: "Great tit" } });
    await db.site.createMany({ data: ["AAA", "BBB"].map((code) => ({ code, name: code, speciesId: species.id, latitude: 50, longitude: 5, firstYear: 2000, lastYear: 2001 })) });
  });
  afterAll(async () => database.drop());

  it("creates a site lead, assigns sites, and audits each change with before and after", async () => {
    const { db } = database;
    // Input is parsed at the edge: the schema normalises the email to lower case.
    const { userId } = await createUser(db, coordinator, createUserSchema.parse({ email: "Lead@Example.org", displayName: "Lead", role: "site_lead", password: "long-enough-pw" }));
    await updateUser(db, coordinator, userId, { leadsSites: ["AAA"] });
    const lead = (await actorForUser(db, userId, "session"))!;
    expect(lead.siteIds).toHaveLength(1);
    await expect(createUser(db, coordinator, { email: "lead@example.org", displayName: "Again", role: "viewer", password: "long-enough-pw" })).rejects.toThrow(/exists already/);
    await expect(updateUser(db, coordinator, userId, { leadsSites: ["ZZZ"] })).rejects.toThrow(/unknown site codes: ZZZ/);
    const entries = await listAuditEntries(db, coordinator, { entityType: "User", limit: 10 });
    const update = entries.find((e) => e.action === "user.update")!;
    expect({ before: update.before, after: update.after }).toEqual({ before: { role: "site_lead", active: true, leadsSites: [] }, after: { role: "site_lead", active: true, leadsSites: ["AAA"] } });
    expect(entries.some((e) => e.action === "user.create" && e.actorUserId === coordinator.userId)).toBe(true);
  });

  it("refuses account management and the audit trail to everyone but the coordinator", async () => {
    const { db } = database;
    const viewerUser = await db.user.create({ data: { email: "v@example.org", displayName: "V", role: "viewer" } });
    const viewer = (await actorForUser(db, viewerUser.id, "session"))!;
    await expect(listUsers(db, viewer)).rejects.toThrow(/only the coordinator/);
    await expect(createUser(db, viewer, { email: "x@example.org", displayName: "X", role: "coordinator", password: "long-enough-pw" })).rejects.toThrow(/only the coordinator/);
    await expect(listAuditEntries(db, viewer, { limit: 5 })).rejects.toThrow(/only the coordinator/);
  });

  it("ends a deactivated user's sessions, and keeps the last coordinator", async () => {
    const { db } = database;
    const viewerUser = await db.user.create({ data: { email: "w@example.org", displayName: "W", role: "viewer" } });
    const session = await startSession(db, viewerUser.id);
    await updateUser(db, coordinator, viewerUser.id, { active: false });
    expect(await resolveSession(db, session.secret)).toBeNull();
    await expect(updateUser(db, coordinator, coordinator.userId!, { role: "viewer" })).rejects.toThrow(/only active coordinator/);
  });
});
