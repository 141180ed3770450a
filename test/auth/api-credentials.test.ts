import Papa from "papaparse";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { apiRoutes } from "@/lib/api/routes";
import { buildOpenApiDocument } from "@/lib/api/openapi";
import { actorForUser } from "@/lib/auth/actor";
import { createApiToken, revokeApiToken } from "@/lib/auth/api-tokens";
import { endSession, SESSION_IDLE_TIMEOUT_MS, startSession } from "@/lib/auth/sessions";
import { getDb } from "@/lib/db/client";
import { updateNetworkSettings } from "@/lib/settings/network-settings";
import { writeSubmission } from "@/lib/submissions/write-submission";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";
import { callRoute, type Caller } from "@/test/api/call-route";

/**
 * How the JSON API recognises its callers and what each may read: cross-site requests that would
 * change data are refused (Fetch Metadata, W3C; Origin, RFC 6454), API tokens act only within
 * their user's role and sites and stop at revocation, expired or ended sessions are anonymous,
 * and lists of brood records and pooled results follow the network's visibility settings.
 */
const providers = await testProviders();

const broodRows = (femaleId: string) => [{ year: 2010, femaleId, layDateDoy: 120, clutchSize: 7, hatchDateDoy: null, fledglings: 5, recruits: 1 }];
const estimateRow = { outcome: "recruitment", level: "within_year", term: "linear", year: null, value: -0.1, standardError: 0.04, n: 100, scale: "per_day", link: "logit", method: "Wald" };

describe.each(providers)("API callers and visibility on %s", (provider) => {
  let database: TestDatabase;
  const as = {} as Record<"coordinator" | "lead" | "viewer", Caller>;
  let leadId = 0;
  let viewerId = 0;
  let sha = 0;
  const auditCount = () => database.db.auditEntry.count();
  const newSite = (code: string) => ({ code, name: `${code} Wood`, species: { scientificName: "Parus major", commonName: "Great tit" }, latitude: 50, longitude: 4, firstYear: 2000, lastYear: 2020 });

  beforeAll(async () => {
    database = await createTestDatabase(provider);
    process.env.DATABASE_URL = database.url;
    const { db } = database;
    const coordinatorId = (await db.user.create({ data: { email: "c@example.org", displayName: "Coordinator", role: "coordinator" } })).id;
    leadId = (await db.user.create({ data: { email: "l@example.org", displayName: "Lead", role: "site_lead" } })).id;
    viewerId = (await db.user.create({ data: { email: "v@example.org", displayName: "Viewer", role: "viewer" } })).id;
    const species = await db.species.create({ data: { scientificName: "Parus major", commonName: "Great tit" } });
    for (const [code, lead] of [["OWN", leadId], ["OTH", null]] as const) {
      await db.site.create({ data: { code, name: code, speciesId: species.id, latitude: 51, longitude: 5, firstYear: 2000, lastYear: 2020, leadUserId: lead } });
      await writeSubmission(db, { siteCode: code, kind: "brood_records", fileName: "b.csv", sha256: (++sha).toString(16).padStart(64, "0"), rows: broodRows(`${code}-1`) });
      await writeSubmission(db, { siteCode: code, kind: "estimates", fileName: "e.csv", sha256: (++sha).toString(16).padStart(64, "0"), rows: [estimateRow] });
    }
    as.coordinator = { sessionSecret: (await startSession(db, coordinatorId)).secret };
    as.lead = { sessionSecret: (await startSession(db, leadId)).secret };
    as.viewer = { sessionSecret: (await startSession(db, viewerId)).secret };
  });
  afterAll(async () => {
    await getDb().$disconnect();
    await database.drop();
  });

  it("refuses a cross-site request that would change data, even with a valid session, and writes nothing", async () => {
    const before = await auditCount();
    const crossSite = await callRoute(apiRoutes.createSite, { json: newSite("EVIL1"), as: { ...as.coordinator, headers: { origin: "https://elsewhere.example", "sec-fetch-site": "cross-site" } } });
    expect(crossSite.status).toBe(403);
    expect(crossSite.body.error.message).toMatch(/^cross-site request refused/);
    // A browser that sends Origin but no Fetch Metadata: Origin is compared with the host.
    const oldBrowser = await callRoute(apiRoutes.createSite, { json: newSite("EVIL2"), as: { ...as.coordinator, headers: { origin: "https://elsewhere.example" } } });
    expect(oldBrowser.status).toBe(403);
    const sameSite = await callRoute(apiRoutes.withdrawSubmission, { params: { id: "1" }, as: { ...as.coordinator, headers: { "sec-fetch-site": "same-site" } } });
    expect(sameSite.status).toBe(403);
    expect(await database.db.site.count({ where: { code: { startsWith: "EVIL" } } })).toBe(0);
    expect(await auditCount()).toBe(before);
    // The same request from PhenoPool's own pages goes through; reading cross-site is harmless and allowed.
    const own = await callRoute(apiRoutes.createSite, { json: newSite("NEW1"), as: { ...as.coordinator, headers: { origin: "http://localhost", "sec-fetch-site": "same-origin" } } });
    expect(own.status).toBe(201);
    expect((await callRoute(apiRoutes.listSites, { as: { ...as.viewer, headers: { "sec-fetch-site": "cross-site" } } })).status).toBe(200);
  });

  it("lets a site lead's API token upload to the lead's own site only, records its last use, and refuses it once revoked", async () => {
    const { db } = database;
    const lead = (await actorForUser(db, leadId, "session"))!;
    const token = await createApiToken(db, lead, { name: "field station" });
    const byToken: Caller = { apiToken: token.secret, headers: { "sec-fetch-site": "cross-site" } };
    const own = await callRoute(apiRoutes.createSubmission, { json: { siteCode: "OWN", kind: "brood_records", rows: broodRows("T-1") }, as: byToken });
    expect(own.status).toBe(201);
    expect(own.body.submission.submittedBy).toBe("Lead");
    expect((await db.apiToken.findUniqueOrThrow({ where: { id: token.id } })).lastUsedAt).not.toBeNull();
    const before = await auditCount();
    const other = await callRoute(apiRoutes.createSubmission, { json: { siteCode: "OTH", kind: "brood_records", rows: broodRows("T-2") }, as: byToken });
    expect(other.status).toBe(403);
    expect(other.body.error.message).toBe("site leads may change only their own sites");
    const coordinatorWork = await callRoute(apiRoutes.createSite, { json: newSite("TOK1"), as: byToken });
    expect(coordinatorWork.status).toBe(403);
    await revokeApiToken(db, lead, token.id);
    const revoked = await callRoute(apiRoutes.createSubmission, { json: { siteCode: "OWN", kind: "brood_records", rows: broodRows("T-3") }, as: byToken });
    expect(revoked.status).toBe(401);
    expect(revoked.body.error.message).toMatch(/API token .* not valid/);
    expect((await callRoute(apiRoutes.listSites, { as: { apiToken: "ppt_never-issued" } })).status).toBe(401);
    // The revocation itself is audited; the refused calls wrote nothing.
    expect(await auditCount()).toBe(before + 1);
  });

  it("refuses a deactivated user's token, an ended session and a session idle past its timeout", async () => {
    const { db } = database;
    const viewer = (await actorForUser(db, viewerId, "session"))!;
    const token = await createApiToken(db, viewer, { name: "read-only script" });
    expect((await callRoute(apiRoutes.listSites, { as: { apiToken: token.secret } })).status).toBe(200);
    const idle = await startSession(db, viewerId, undefined, new Date(Date.now() - SESSION_IDLE_TIMEOUT_MS - 60_000));
    expect((await callRoute(apiRoutes.listSites, { as: { sessionSecret: idle.secret } })).status).toBe(401);
    const ended = await startSession(db, viewerId);
    expect((await callRoute(apiRoutes.listSites, { as: { sessionSecret: ended.secret } })).status).toBe(200);
    await endSession(db, ended.secret);
    expect((await callRoute(apiRoutes.listSites, { as: { sessionSecret: ended.secret } })).status).toBe(401);
    await db.user.update({ where: { id: viewerId }, data: { active: false } });
    expect((await callRoute(apiRoutes.listSites, { as: { apiToken: token.secret } })).status).toBe(401);
    await db.user.update({ where: { id: viewerId }, data: { active: true } });
  });

  it("serves only the OpenAPI document without signing in", async () => {
    expect((await callRoute(apiRoutes.openApi, { as: {} })).status).toBe(200);
    const anonymous = await callRoute(apiRoutes.listSites, { as: {} });
    expect(anonymous.status).toBe(401);
    expect(anonymous.body.error).toMatchObject({ code: "unauthenticated", message: "sign in first" });
    expect((await callRoute(apiRoutes.listBroodRecords, { as: {}, query: { limit: "zero" } })).status).toBe(401);
  });

  it("lists brood records of the lead's own sites only, refusing another site by name and viewers altogether, while raw records are not shared", async () => {
    const mine = await callRoute(apiRoutes.listBroodRecords, { as: as.lead });
    expect(mine.status).toBe(200);
    expect(new Set(mine.body.items.map((b: { siteCode: string }) => b.siteCode))).toEqual(new Set(["OWN"]));
    const other = await callRoute(apiRoutes.listBroodRecords, { as: as.lead, query: { site: ["OWN", "OTH"] } });
    expect(other.status).toBe(403);
    expect(other.body.error.message).toBe("other sites' brood records are not shared in this network: OTH");
    const othSubmission = await database.db.submission.findFirstOrThrow({ where: { site: { code: "OTH" }, kind: "brood_records" } });
    expect((await callRoute(apiRoutes.exportBroodRecords, { as: as.lead, query: { submission: String(othSubmission.id), format: "json" } })).status).toBe(403);
    const csv = await callRoute(apiRoutes.exportBroodRecords, { as: as.lead });
    // OWN's current brood records are those its lead's token uploaded above.
    expect(Papa.parse<Record<string, string>>(csv.text.trim(), { header: true }).data.map((r) => [r.siteCode, r.femaleId])).toEqual([["OWN", "T-1"]]);
    const viewer = await callRoute(apiRoutes.listBroodRecords, { as: as.viewer });
    expect(viewer.status).toBe(403);
    expect(viewer.body.error.message).toMatch(/not shared in this network, and you lead no site/);
    const all = await callRoute(apiRoutes.listBroodRecords, { as: as.coordinator });
    expect(new Set(all.body.items.map((b: { siteCode: string }) => b.siteCode))).toEqual(new Set(["OWN", "OTH"]));
  });

  it("lists every site's brood records to everyone signed in once the network shares them", async () => {
    await updateNetworkSettings(database.db, { other_sites_raw_records_visible: true });
    try {
      const viewer = await callRoute(apiRoutes.listBroodRecords, { as: as.viewer, query: { site: "OTH" } });
      expect(viewer.status).toBe(200);
      expect(viewer.body.items.map((b: { femaleId: string }) => b.femaleId)).toEqual(["OTH-1"]);
    } finally {
      await updateNetworkSettings(database.db, { other_sites_raw_records_visible: false });
    }
  });

  it("shows pooled results to site leads and viewers by default, and withholds them (saying why) when the network says so", async () => {
    expect((await callRoute(apiRoutes.listEstimates, { as: as.viewer })).body.total).toBe(2);
    expect((await callRoute(apiRoutes.getSite, { as: as.viewer, params: { code: "OTH" } })).body).toMatchObject({ estimatesWithheld: null, estimates: [{ value: -0.1 }] });
    await updateNetworkSettings(database.db, { pooled_results_visible: false });
    try {
      for (const caller of [as.viewer, as.lead]) {
        const estimates = await callRoute(apiRoutes.listEstimates, { as: caller });
        expect(estimates.status).toBe(403);
        expect(estimates.body.error.message).toBe("pooled results are visible to the coordinator only in this network");
        expect((await callRoute(apiRoutes.listAnalyses, { as: caller })).status).toBe(403);
        expect((await callRoute(apiRoutes.exportEstimates, { as: caller })).status).toBe(403);
      }
      const site = await callRoute(apiRoutes.getSite, { as: as.viewer, params: { code: "OTH" } });
      expect(site.body).toMatchObject({ estimates: [], estimatesWithheld: "pooled results are visible to the coordinator only in this network" });
      expect((await callRoute(apiRoutes.listEstimates, { as: as.coordinator })).body.total).toBe(2);
    } finally {
      await updateNetworkSettings(database.db, { pooled_results_visible: true });
    }
  });

  it("keeps the whole-network data package and the audit trail to the coordinator", async () => {
    for (const caller of [as.lead, as.viewer]) {
      expect((await callRoute(apiRoutes.exportDataPackage, { as: caller })).status).toBe(403);
      expect((await callRoute(apiRoutes.exportAudit, { as: caller })).status).toBe(403);
    }
    expect((await callRoute(apiRoutes.exportDataPackage, { as: as.coordinator })).status).toBe(200);
    expect((await callRoute(apiRoutes.exportAudit, { as: as.coordinator, query: { format: "json" } })).status).toBe(200);
  });
});

describe("the OpenAPI document's security", () => {
  const document = buildOpenApiDocument();
  it("states both ways of signing in: the session cookie and a bearer API token", () => {
    expect(document.components.securitySchemes).toMatchObject({
      sessionCookie: { type: "apiKey", in: "cookie", name: "phenopool_session" },
      bearerToken: { type: "http", scheme: "bearer" },
    });
    expect(document.security).toEqual([{ sessionCookie: [] }, { bearerToken: [] }]);
  });

  it("says in each operation who may call it, and marks only the document itself as public", () => {
    const operations = Object.values(document.paths).flatMap((item) => Object.values(item as Record<string, { operationId: string; description: string; security?: unknown[] }>));
    expect(operations.length).toBeGreaterThan(20);
    for (const operation of operations) expect(operation.description, operation.operationId).toMatch(/Access: /);
    expect(operations.filter((o) => o.security !== undefined).map((o) => [o.operationId, o.security])).toEqual([["getOpenApiDocument", []]]);
    const upload = operations.find((o) => o.operationId === "createSubmission")!;
    expect(upload.description).toContain("Access: the coordinator, or the site's lead (submission.create); the site is the site named by the field siteCode.");
  });
});
