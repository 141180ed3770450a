import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startServer, type RunningServer } from "./harness";
import { CRASH_SITES, inspect, killFractions, pause, prepareCrashNetwork, type CrashNetwork } from "./crash-trials";
import { createDb, type Db } from "@/lib/db/client";
import { recomputeSiteEstimates } from "@/lib/estimates/recompute-site-estimates";
import { enqueueSiteRecompute } from "@/lib/jobs/recompute-site-estimates-job";

/**
 * Killing the server (SIGKILL, to it and its job process) at seeded random moments while its job
 * process recomputes a site's estimates, 20 times. Before each trial the site holds a stale set of
 * computed estimates (other values, fewer rows) and a queued recomputation. Right after each kill
 * the site holds exactly the stale set or exactly the clean set, never a mixture; after the
 * restart the interrupted job is re-queued and redone, and the site holds exactly the set a clean
 * recomputation gives (same data, same bootstrap seed), and the database passes its checks.
 */
const TRIALS = 20;
const KILL_SEED = 20_261_202;

type EstimateRow = { outcome: string; level: string; term: string; year: number | null; value: number; standardError: number; n: number; method: string };
type StoredEstimate = Awaited<ReturnType<Db["estimate"]["findMany"]>>[number];

async function computedSet(db: Db, siteId: number): Promise<string[]> {
  const rows: EstimateRow[] = await db.estimate.findMany({
    where: { siteId, source: "computed" },
    select: { outcome: true, level: true, term: true, year: true, value: true, standardError: true, n: true, method: true },
  });
  return rows.map((r) => JSON.stringify([r.outcome, r.level, r.term, r.year, r.value, r.standardError, r.n, r.method])).sort();
}

describe("a server killed while it recomputes a site's estimates", () => {
  let network: CrashNetwork;
  let server: RunningServer | null = null;
  let siteId = 0;
  let clean: string[] = [];
  let stale: StoredEstimate[] = [];

  beforeAll(async () => {
    network = await prepareCrashNetwork();
    const db = createDb(network.databaseUrl);
    try {
      siteId = (await db.site.findUniqueOrThrow({ where: { code: CRASH_SITES[1] } })).id;
      // The clean set: what the job computes from these data (its default options and seed).
      await recomputeSiteEstimates(db, siteId);
      clean = await computedSet(db, siteId);
      const rows = await db.estimate.findMany({ where: { siteId, source: "computed" }, orderBy: { id: "asc" } });
      stale = rows.slice(0, Math.ceil(rows.length / 2)).map((r) => ({ ...r, value: r.value + 0.5, method: `stale: ${r.method}` }));
    } finally {
      await db.$disconnect();
    }
    expect(clean.length).toBeGreaterThan(stale.length);
  });
  afterAll(async () => {
    await server?.kill("SIGKILL");
    network?.remove();
  });

  /** Replaces the site's computed estimates with the stale set and queues its recomputation, in one transaction. */
  const makeStale = async (): Promise<number> => {
    const db = createDb(network.databaseUrl);
    try {
      const submission = await db.submission.findFirstOrThrow({ where: { siteId, kind: "brood_records", status: "accepted" } });
      return await db.$transaction(async (tx) => {
        await tx.estimate.deleteMany({ where: { siteId, source: "computed" } });
        await tx.estimate.createMany({ data: stale.map(({ id: _id, ...e }) => ({ ...e, submissionId: submission.id })) });
        return (await enqueueSiteRecompute(tx, { siteId, submissionId: submission.id })).id;
      });
    } finally {
      await db.$disconnect();
    }
  };
  const staleSet = async () => (await inspect(network.databaseUrl, (db) => computedSet(db, siteId))).result;
  const jobStatus = async (db: Db, id: number) => (await db.job.findUniqueOrThrow({ where: { id } })).status;
  /** Polls until the job is in `status` (on a connection of the test's own), or fails after `timeoutMs`. */
  const waitFor = async (id: number, statuses: string[], timeoutMs: number): Promise<void> => {
    const db = createDb(network.databaseUrl);
    try {
      const deadline = performance.now() + timeoutMs;
      while (!statuses.includes(await jobStatus(db, id))) {
        if (performance.now() > deadline) throw new Error(`job ${id} not ${statuses.join(" or ")} within ${timeoutMs} ms (${await jobStatus(db, id)})`);
        await pause(10);
      }
    } finally {
      await db.$disconnect();
    }
  };

  it(`never leaves a half-replaced set across ${TRIALS} kills at seeded moments, and redoes the job on start`, async () => {
    // Left alone, how long the job takes: the kill moments are fractions of it.
    const calibrationJob = await makeStale();
    const staleStrings = await staleSet();
    server = await startServer({ databaseUrl: network.databaseUrl });
    await waitFor(calibrationJob, ["running"], 60_000);
    let started = performance.now();
    await waitFor(calibrationJob, ["succeeded"], 60_000);
    const jobMs = performance.now() - started;
    expect((await inspect(network.databaseUrl, (db) => computedSet(db, siteId))).result).toEqual(clean);

    const outcomes = { staleAtKill: 0, cleanAtKill: 0, jobRunningAtKill: 0 };
    for (const [trial, fraction] of killFractions(KILL_SEED, TRIALS).entries()) {
      const jobId = await makeStale();
      // The running job process finds the queued job within its poll interval (2 s).
      await waitFor(jobId, ["running"], 30_000);
      started = performance.now();
      await pause(fraction * jobMs);
      await server.kill("SIGKILL");
      const label = `trial ${trial + 1}: killed ${Math.round(performance.now() - started)} ms into a ${Math.round(jobMs)} ms job`;

      const atKill = await inspect(network.databaseUrl, async (db) => ({ set: await computedSet(db, siteId), status: await jobStatus(db, jobId) }));
      expect(atKill.problems, label).toEqual([]);
      const whole = JSON.stringify(atKill.result.set) === JSON.stringify(clean) ? "clean" : JSON.stringify(atKill.result.set) === JSON.stringify(staleStrings) ? "stale" : "mixed";
      expect(whole, label).not.toBe("mixed");
      if (whole === "clean") outcomes.cleanAtKill += 1;
      else outcomes.staleAtKill += 1;
      if (atKill.result.status === "running") outcomes.jobRunningAtKill += 1;

      server = await startServer({ databaseUrl: network.databaseUrl });
      await waitFor(jobId, ["succeeded", "failed", "cancelled"], 60_000);
      const recovered = await inspect(network.databaseUrl, async (db) => ({ set: await computedSet(db, siteId), status: await jobStatus(db, jobId) }));
      expect(recovered.problems, label).toEqual([]);
      expect(recovered.result.status, label).toBe("succeeded");
      expect(recovered.result.set, label).toEqual(clean);
    }
    console.log(`recompute crash trials: ${JSON.stringify(outcomes)} (job alone took ${Math.round(jobMs)} ms)`);
    expect(outcomes.staleAtKill + outcomes.cleanAtKill).toBe(TRIALS);
  }, 300_000);
});
