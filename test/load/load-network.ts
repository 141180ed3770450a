import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { createAnalysis } from "@/lib/analyses/analyses";
import { analysisSpecificationSchema } from "@/lib/analyses/specification";
import { actorForUser, type Actor } from "@/lib/auth/actor";
import { createApiToken } from "@/lib/auth/api-tokens";
import { SESSION_COOKIE, startSession } from "@/lib/auth/sessions";
import { createDb } from "@/lib/db/client";
import type { DatabaseProvider } from "@/lib/db/provider";
import type { BroodRecordRow } from "@/lib/ingest/schemas/brood-record-row";
import { runSeed } from "@/seed/run-seed";
import { DEFAULT_DEMO_SEED } from "@/seed/simulate";
import { createEmptyDatabase } from "@/test/helpers/test-databases";

/**
 * The network the load test drives: the demo network in a throwaway database (a SQLite file in a
 * temporary folder, or a PostgreSQL database on 127.0.0.1 that is dropped afterwards), with an API
 * token for each site lead (uploads to their own site), one for the coordinator (lists and
 * analysis runs), a coordinator's session cookie for the pages, and three saved analyses.
 */
export interface UploadSite {
  siteCode: string;
  leadToken: string;
  /** The site's current brood records: the base of every file uploaded to it. */
  broods: BroodRecordRow[];
}

export interface LoadNetwork {
  provider: DatabaseProvider;
  databaseUrl: string;
  uploadSites: UploadSite[];
  siteCodes: string[];
  coordinatorToken: string;
  sessionCookie: string;
  analysisIds: number[];
  drop: () => Promise<void>;
}

const ANALYSES = [
  { name: "Recruitment cost of mismatch by warming", outcome: "recruitment", level: "within_year", term: "linear", moderators: ["warming_rate"] },
  { name: "Fledging failure between years", outcome: "fledging_failure", level: "between_year", term: "linear", model: { type: "random_effects", tau2Estimator: "dl" } },
  { name: "Linear selection on lay date", outcome: "selection_gradient", level: "within_year", term: "linear", scale: "per_sd", test: "hksj" },
] as const;

async function tokenFor(db: ReturnType<typeof createDb>, userId: number, name: string): Promise<string> {
  const actor = (await actorForUser(db, userId, "session")) as Actor;
  return (await createApiToken(db, actor, { name })).secret;
}

export async function prepareLoadNetwork(provider: DatabaseProvider): Promise<LoadNetwork> {
  let databaseUrl: string;
  let dropDatabase: () => Promise<void>;
  if (provider === "sqlite") {
    const dir = mkdtempSync(join(tmpdir(), "phenopool-load-"));
    databaseUrl = `file:${join(dir, "load.db")}`;
    dropDatabase = async () => rmSync(dir, { recursive: true, force: true });
  } else {
    const empty = await createEmptyDatabase("postgresql");
    databaseUrl = empty.url;
    dropDatabase = empty.dropRaw;
  }
  try {
    // No passwords (the clients use tokens and a session made here) and no truth file.
    await runSeed({ databaseUrl, seed: DEFAULT_DEMO_SEED, truthPath: null, accountsPath: null });
    const db = createDb(databaseUrl);
    try {
      const coordinator = await db.user.findFirstOrThrow({ where: { role: "coordinator" }, orderBy: { id: "asc" } });
      const sites = await db.site.findMany({ orderBy: { code: "asc" }, select: { id: true, code: true, leadUserId: true } });
      const uploadSites: UploadSite[] = [];
      for (const site of sites) {
        if (site.leadUserId === null) continue;
        const broods = await db.broodRecord.findMany({
          where: { siteId: site.id, submission: { status: "accepted" } },
          select: { year: true, femaleId: true, layDateDoy: true, clutchSize: true, hatchDateDoy: true, fledglings: true, recruits: true },
          orderBy: { id: "asc" },
        });
        if (broods.length === 0) continue;
        uploadSites.push({ siteCode: site.code, leadToken: await tokenFor(db, site.leadUserId, `load test ${site.code}`), broods });
      }
      const coordinatorActor = (await actorForUser(db, coordinator.id, "session")) as Actor;
      const analysisIds: number[] = [];
      for (const spec of ANALYSES) analysisIds.push((await createAnalysis(db, analysisSpecificationSchema.parse(spec), coordinatorActor)).id);
      const session = await startSession(db, coordinator.id);
      return {
        provider,
        databaseUrl,
        uploadSites,
        siteCodes: sites.map((s) => s.code),
        coordinatorToken: await tokenFor(db, coordinator.id, "load test coordinator"),
        sessionCookie: `${SESSION_COOKIE}=${encodeURIComponent(session.secret)}`,
        analysisIds,
        drop: dropDatabase,
      };
    } finally {
      await db.$disconnect();
    }
  } catch (error) {
    await dropDatabase();
    throw error;
  }
}
