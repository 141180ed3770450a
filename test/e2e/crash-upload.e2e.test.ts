import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startServer, type RunningServer } from "./harness";
import { CRASH_SITES, inspect, killFractions, prepareCrashNetwork, type CrashNetwork } from "./crash-trials";
import { createDb } from "@/lib/db/client";
import type { BroodRecordRow } from "@/lib/ingest/schemas/brood-record-row";
import { uploadFile, type UploadFile } from "@/test/load/upload-files";

/**
 * Killing the server (SIGKILL, to it and its job process) at seeded random moments while it
 * accepts a large upload, 20 times. After each kill, before and after the restart: SQLite's
 * integrity check passes, no row is an orphan, every submission holds all its rows, the upload is
 * there exactly once or not at all (and always there when the client had been told 201), its audit
 * entry is there exactly when it is, a recomputation of the site is due when it is, and no queued
 * job names a submission that is not there.
 */
const TRIALS = 20;
const KILL_SEED = 20_261_201;
/** ~41 000 brood records, ~1 MB: six copies of the site's broods. */
const COPIES = 6;

describe("a server killed while it accepts a large upload", () => {
  let network: CrashNetwork;
  let server: RunningServer;
  let broods: BroodRecordRow[];
  const site = CRASH_SITES[0];

  beforeAll(async () => {
    network = await prepareCrashNetwork();
    const db = createDb(network.databaseUrl);
    try {
      broods = await db.broodRecord.findMany({
        where: { site: { code: site }, submission: { status: "accepted" } },
        select: { year: true, femaleId: true, layDateDoy: true, clutchSize: true, hatchDateDoy: true, fledglings: true, recruits: true },
        orderBy: { id: "asc" },
      });
    } finally {
      await db.$disconnect();
    }
    server = await startServer({ databaseUrl: network.databaseUrl });
  });
  afterAll(async () => {
    await server?.kill("SIGKILL");
    network?.remove();
  });

  const send = (file: UploadFile) => {
    const form = new FormData();
    form.set("file", new File([file.csv], file.fileName, { type: "text/csv" }));
    form.set("siteCode", site);
    form.set("kind", "brood_records");
    return fetch(`${server.baseUrl}/api/v1/submissions`, { method: "POST", body: form, headers: { authorization: `Bearer ${network.coordinatorToken}` } }).then(
      async (response) => ({ status: response.status, body: await response.text() }),
      (error: Error) => ({ status: null, body: error.message }),
    );
  };

  /** The upload's submission (by its SHA-256), audit entries and queued recomputations. */
  const traces = (file: UploadFile) =>
    inspect(network.databaseUrl, async (db) => {
      const submissions = await db.submission.findMany({ where: { sha256: file.sha256 }, select: { id: true, rowCount: true } });
      const ids = submissions.map((s) => String(s.id));
      const audits = ids.length ? await db.auditEntry.count({ where: { action: "submission.upload", entityId: { in: ids } } }) : 0;
      // A recomputation is queued with the upload, unless one for the site is queued already (it
      // reads the site's data when it runs); no job names a submission that does not exist.
      const jobs = await db.job.findMany({ where: { kind: "recompute_site_estimates" }, select: { payload: true, status: true } });
      const named = jobs.map((j) => (JSON.parse(j.payload) as { submissionId: number | null }).submissionId).filter((id): id is number => id !== null);
      const existing = new Set((await db.submission.findMany({ where: { id: { in: named } }, select: { id: true } })).map((s) => s.id));
      const orphanJobs = named.filter((id) => !existing.has(id)).length;
      const recomputeDue = submissions.length
        ? jobs.some((j) => (JSON.parse(j.payload) as { submissionId: number | null }).submissionId === submissions[0]!.id || j.status === "queued" || j.status === "running")
        : false;
      const rows = submissions.length ? await db.broodRecord.count({ where: { submissionId: submissions[0]!.id } }) : 0;
      return { submissions: submissions.length, rowCount: submissions[0]?.rowCount ?? 0, rows, audits, recomputeDue, orphanJobs };
    });

  it(`keeps each upload whole or absent across ${TRIALS} kills at seeded moments`, async () => {
    // Left alone, how long the upload takes on this machine just after a start (as in every trial,
    // the job process is then recomputing the site): the kill moments are fractions of it.
    const warmUp = uploadFile(site, broods, 0, 0, COPIES);
    expect((await send(warmUp)).status).toBe(201);
    await server.kill("SIGKILL");
    server = await startServer({ databaseUrl: network.databaseUrl });
    const calibration = uploadFile(site, broods, 0, 1, COPIES);
    let started = performance.now();
    const alone = await send(calibration);
    const uploadMs = performance.now() - started;
    expect(alone.status).toBe(201);
    expect((await traces(calibration)).result).toMatchObject({ submissions: 1, rows: calibration.rowCount, audits: 1 });
    await server.kill("SIGKILL");
    server = await startServer({ databaseUrl: network.databaseUrl });

    const outcomes = { killedBeforeReply: 0, stored: 0, absent: 0 };
    for (const [trial, fraction] of killFractions(KILL_SEED, TRIALS).entries()) {
      const file = uploadFile(site, broods, 1, trial + 1, COPIES);
      started = performance.now();
      const reply = send(file);
      await new Promise((resolve) => setTimeout(resolve, fraction * uploadMs));
      await server.kill("SIGKILL");
      const { status } = await reply;
      if (status === null) outcomes.killedBeforeReply += 1;
      const label = `trial ${trial + 1}: killed ${Math.round(performance.now() - started)} ms into a ${Math.round(uploadMs)} ms upload, reply ${status ?? "none"}`;

      const afterCrash = await traces(file);
      expect(afterCrash.problems, label).toEqual([]);
      server = await startServer({ databaseUrl: network.databaseUrl });
      const afterRestart = await traces(file);
      expect(afterRestart.problems, label).toEqual([]);
      expect({ ...afterRestart.result, recomputeDue: null }, label).toEqual({ ...afterCrash.result, recomputeDue: null });
      const found = afterRestart.result;
      if (status === 201) expect(found.submissions, label).toBe(1);
      if (found.submissions === 1) {
        outcomes.stored += 1;
        expect(found, label).toEqual({ submissions: 1, rowCount: file.rowCount, rows: file.rowCount, audits: 1, recomputeDue: true, orphanJobs: 0 });
      } else {
        outcomes.absent += 1;
        expect(found, label).toEqual({ submissions: 0, rowCount: 0, rows: 0, audits: 0, recomputeDue: false, orphanJobs: 0 });
      }
    }
    console.log(`upload crash trials: ${JSON.stringify(outcomes)} (upload alone took ${Math.round(uploadMs)} ms)`);
    expect(outcomes.stored + outcomes.absent).toBe(TRIALS);
  }, 300_000);
});
