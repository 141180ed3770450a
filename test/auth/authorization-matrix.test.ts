import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { apiRoutes, API_ROUTES } from "@/lib/api/routes";
import type { RouteDefinition } from "@/lib/api/route-definition";
import { ACTIONS } from "@/lib/auth/policy";
import { actorForUser, type Actor } from "@/lib/auth/actor";
import { createApiToken } from "@/lib/auth/api-tokens";
import { startSession } from "@/lib/auth/sessions";
import { createAnalysis } from "@/lib/analyses/analyses";
import { analysisSpecificationSchema } from "@/lib/analyses/specification";
import { getDb } from "@/lib/db/client";
import { writeSubmission } from "@/lib/submissions/write-submission";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";
import { callRoute, type Caller, type CallOptions } from "@/test/api/call-route";

/**
 * The authorization matrix of the accounts specification, over every route of the JSON API that
 * changes data, called as Next.js calls the handlers with real sessions and API tokens against a
 * throwaway database: each caller (coordinator, site lead by session and by API token, viewer,
 * anonymous) on the site lead's own site and on another site. Every verdict is asserted: allowed
 * calls succeed (2xx) and write an audit entry naming the caller, refused ones are 401
 * (anonymous) or 403 and write nothing at all.
 */
const providers = await testProviders();

type Verdict = "allow" | "deny";
type CallerName = "coordinator" | "site lead" | "site lead (API token)" | "viewer" | "anonymous";
const CALLERS: readonly CallerName[] = ["coordinator", "site lead", "site lead (API token)", "viewer", "anonymous"];
type SiteName = "own" | "other";

interface Context {
  /** Site codes: "own" is led by the site lead under test, "other" by someone else. */
  sites: Record<SiteName, string>;
  analysisId: number;
  /** A fresh number for each call, so every request is new (no "unchanged" replies). */
  next: () => number;
  /** Writes a submission of `site` directly (no API, no audit entry); returns its id. */
  submit: (site: string) => Promise<number>;
}

interface MatrixRow {
  route: RouteDefinition;
  /** Told apart when one route is called in two ways (JSON body, file upload). */
  variant: string;
  /** The action name of the audit entry an allowed call writes. */
  audited: string;
  request: (context: Context, site: string) => Promise<CallOptions>;
  /** Verdicts on [own site, other site] for each caller. */
  expected: Record<CallerName, [Verdict, Verdict]>;
}

const COORDINATOR_ONLY: MatrixRow["expected"] = {
  coordinator: ["allow", "allow"],
  "site lead": ["deny", "deny"],
  "site lead (API token)": ["deny", "deny"],
  viewer: ["deny", "deny"],
  anonymous: ["deny", "deny"],
};
const OWN_SITE: MatrixRow["expected"] = {
  coordinator: ["allow", "allow"],
  "site lead": ["allow", "deny"],
  "site lead (API token)": ["allow", "deny"],
  viewer: ["deny", "deny"],
  anonymous: ["deny", "deny"],
};

const siteEstimate = (value: number) => ({
  outcome: "recruitment",
  level: "within_year",
  term: "linear",
  year: null,
  value,
  standardError: 0.05,
  n: 120,
  scale: "per_day",
  link: "logit",
  method: "logistic regression on mismatch, Wald SE",
});

const MATRIX: MatrixRow[] = [
  {
    route: apiRoutes.createSite,
    variant: "",
    audited: "site.create",
    request: async ({ next }) => ({
      json: { code: `NEW${next()}`, name: "New Wood", species: { scientificName: "Parus major", commonName: "Great tit" }, latitude: 52, longitude: 4, firstYear: 2001, lastYear: 2020 },
    }),
    expected: COORDINATOR_ONLY,
  },
  {
    route: apiRoutes.updateSite,
    variant: "",
    audited: "site.update",
    request: async ({ next }, site) => ({ params: { code: site }, json: { notes: `checked ${next()}` } }),
    expected: OWN_SITE,
  },
  {
    route: apiRoutes.setModeratorValue,
    variant: "",
    audited: "moderator_value.set",
    request: async ({ next }, site) => ({ params: { code: site, key: "canopy" }, json: { categoricalValue: `oak ${next()}` } }),
    expected: OWN_SITE,
  },
  {
    route: apiRoutes.createModerator,
    variant: "",
    audited: "moderator.create",
    request: async ({ next }) => ({ json: { key: `m${next()}`, label: "Nest-box age", unit: "years", kind: "numeric", description: "Mean age of the boxes." } }),
    expected: COORDINATOR_ONLY,
  },
  {
    route: apiRoutes.createSubmission,
    variant: "JSON rows",
    audited: "submission.json",
    request: async ({ next }, site) => ({ json: { siteCode: site, kind: "estimates", rows: [siteEstimate(-0.1 - next() / 1000)] } }),
    expected: OWN_SITE,
  },
  {
    route: apiRoutes.createSubmission,
    variant: "file upload",
    audited: "submission.upload",
    request: async ({ next }, site) => {
      const form = new FormData();
      form.set("file", new File([`female,year,lay date,clutch size,hatch date,fledged,recruits\nF-${next()},2010,121,8,,6,1\n`], "broods.csv", { type: "text/csv" }));
      form.set("siteCode", site);
      form.set("kind", "brood_records");
      return { form };
    },
    expected: OWN_SITE,
  },
  {
    route: apiRoutes.restoreSubmission,
    variant: "",
    audited: "submission.restore",
    request: async ({ submit }, site) => {
      const earlier = await submit(site);
      await submit(site);
      return { params: { id: String(earlier) } };
    },
    expected: OWN_SITE,
  },
  {
    route: apiRoutes.withdrawSubmission,
    variant: "",
    audited: "submission.withdraw",
    request: async ({ submit }, site) => ({ params: { id: String(await submit(site)) } }),
    expected: OWN_SITE,
  },
  {
    route: apiRoutes.createAnalysis,
    variant: "",
    audited: "analysis.create",
    request: async ({ next }) => ({ json: { name: `analysis ${next()}`, outcome: "recruitment", level: "within_year", term: "linear", model: { type: "common_effect" } } }),
    expected: COORDINATOR_ONLY,
  },
  {
    route: apiRoutes.runAnalysis,
    variant: "",
    audited: "analysis.run",
    request: async ({ analysisId }) => ({ params: { id: String(analysisId) } }),
    expected: COORDINATOR_ONLY,
  },
];

const MUTATING_ROUTES = API_ROUTES.filter((route) => route.method !== "GET");
const label = (row: MatrixRow) => `${row.route.method} ${row.route.path}${row.variant ? ` (${row.variant})` : ""}`;

describe("the authorization matrix's coverage", () => {
  it("has a row for every route that changes data, and only those", () => {
    expect(MUTATING_ROUTES.length).toBeGreaterThanOrEqual(9);
    expect([...new Set(MATRIX.map((row) => row.route.operationId))].sort()).toEqual(MUTATING_ROUTES.map((route) => route.operationId).sort());
  });

  it("declares an access rule with a policy action on every route, reads included", () => {
    for (const route of API_ROUTES) {
      expect(route.access, route.operationId).toBeDefined();
      if (route.access.scope === "public") {
        expect(route.method, `${route.operationId} is public: it must not change data`).toBe("GET");
        continue;
      }
      expect(ACTIONS, route.operationId).toContain(route.access.action);
      if (route.access.scope === "site" && route.access.site.from !== "body") {
        expect(Object.keys(route.params?.shape ?? {}), `${route.operationId} locates its site by a path parameter it has`).toContain(route.access.site.param);
      }
    }
  });

  it("gives no route that changes data a public or a plain read access", () => {
    for (const route of MUTATING_ROUTES) {
      expect(route.access.scope, route.operationId).not.toBe("public");
      if (route.access.scope !== "public") expect(route.access.action, route.operationId).not.toMatch(/\.read$/);
    }
  });
});

describe.each(providers)("authorization matrix on %s", (provider) => {
  let database: TestDatabase;
  const callers = {} as Record<CallerName, { caller: Caller; userId: number | null }>;
  let counter = 0;
  const context = { sites: { own: "OWN", other: "OTH" } } as Context;

  beforeAll(async () => {
    database = await createTestDatabase(provider);
    process.env.DATABASE_URL = database.url;
    const { db } = database;
    const user = async (email: string, role: "coordinator" | "site_lead" | "viewer") => (await db.user.create({ data: { email, displayName: email.split("@")[0]!, role } })).id;
    const coordinatorId = await user("coordinator@example.org", "coordinator");
    const leadId = await user("lead@example.org", "site_lead");
    const otherLeadId = await user("other-lead@example.org", "site_lead");
    const viewerId = await user("viewer@example.org", "viewer");
    const species = await db.species.create({ data: { scientificName: "Parus major", commonName: "Great tit" } });
    for (const [code, leadUserId] of [["OWN", leadId], ["OTH", otherLeadId]] as const) {
      await db.site.create({ data: { code, name: `${code} Wood`, speciesId: species.id, latitude: 51, longitude: 5, firstYear: 2000, lastYear: 2020, leadUserId } });
    }
    await db.moderator.create({ data: { key: "canopy", label: "Canopy", kind: "categorical", description: "Dominant tree." } });
    const session = async (userId: number) => ({ sessionSecret: (await startSession(db, userId)).secret });
    const leadActor = (await actorForUser(db, leadId, "session"))!;
    callers.coordinator = { caller: await session(coordinatorId), userId: coordinatorId };
    callers["site lead"] = { caller: await session(leadId), userId: leadId };
    callers["site lead (API token)"] = { caller: { apiToken: (await createApiToken(db, leadActor, { name: "matrix" })).secret }, userId: leadId };
    callers.viewer = { caller: await session(viewerId), userId: viewerId };
    callers.anonymous = { caller: {}, userId: null };

    context.next = () => (counter += 1);
    context.submit = async (site) =>
      (await writeSubmission(db, { siteCode: site, kind: "estimates", fileName: "direct.csv", sha256: (counter += 1).toString(16).padStart(64, "0"), rows: [siteEstimate(-0.05 - counter / 1000)] })).submissionId;
    for (const site of ["OWN", "OTH"]) await context.submit(site);
    const coordinator: Actor = (await actorForUser(db, coordinatorId, "session"))!;
    const analysis = await createAnalysis(db, analysisSpecificationSchema.parse({ name: "matrix run", outcome: "recruitment", level: "within_year", term: "linear", model: { type: "common_effect" } }), coordinator);
    context.analysisId = analysis.id;
  });
  afterAll(async () => {
    await getDb().$disconnect();
    await database.drop();
  });

  const cases = MATRIX.flatMap((row) =>
    CALLERS.flatMap((caller) => (["own", "other"] as const).map((site, index) => ({ row, caller, site, verdict: row.expected[caller][index]! }))),
  );

  it.each(cases.map((c) => [label(c.row), c.caller, c.site, c.verdict, c] as const))("%s by %s on the %s site: %s", async (_route, _caller, _site, _verdict, { row, caller, site, verdict }) => {
    const { db } = database;
    const options = await row.request(context, context.sites[site]);
    const entriesBefore = await db.auditEntry.count();
    const lastIdBefore = (await db.auditEntry.findFirst({ orderBy: { id: "desc" }, select: { id: true } }))?.id ?? 0;
    const reply = await callRoute(row.route, { ...options, as: callers[caller].caller });
    if (verdict === "allow") {
      expect(reply.status, JSON.stringify(reply.body)).toBeGreaterThanOrEqual(200);
      expect(reply.status, JSON.stringify(reply.body)).toBeLessThan(300);
      const written = await db.auditEntry.findMany({ where: { id: { gt: lastIdBefore } } });
      expect(written.map((e) => e.action)).toContain(row.audited);
      expect(written.every((e) => e.actorUserId === callers[caller].userId), "every entry names the caller").toBe(true);
    } else {
      expect(reply.status, JSON.stringify(reply.body)).toBe(caller === "anonymous" ? 401 : 403);
      expect(reply.body.error.code).toBe(caller === "anonymous" ? "unauthenticated" : "forbidden");
      expect(await db.auditEntry.count(), "a refused call writes no audit entry").toBe(entriesBefore);
    }
  });
});
