/**
 * An analysis with a permutation test runs as a background job: queued once, run with progress in
 * blocks, stored as an ordinary run under the user who asked, and when cancelled nothing is
 * stored. The permutation p-values themselves are checked against R in
 * test/analyses/permutation-blocks.test.ts; here the job's p-value must equal the blocked test
 * run directly on the same studies.
 */
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { createAnalysis } from "@/lib/analyses/analyses";
import { analysisSpecificationSchema } from "@/lib/analyses/specification";
import { selectAnalysisDataset } from "@/lib/analyses/analysis-dataset";
import { fitAnalysisWithPermutations } from "@/lib/analyses/fit-analysis";
import { createFirstCoordinator } from "@/lib/auth/create-first-coordinator";
import { actorForUser, type Actor } from "@/lib/auth/actor";
import { cancelJob, getJob } from "@/lib/jobs/job-queue";
import { JOB_HANDLERS } from "@/lib/jobs/job-handlers";
import { runNextJob } from "@/lib/jobs/job-runner";
import { jobsInScope } from "@/lib/jobs/job-scope";
import { enqueueAnalysisRun, listAnalysisRunJobs } from "@/lib/jobs/run-analysis-job";
import { createModerator, setModeratorValue } from "@/lib/network/moderators";
import { moderatorInputSchema, moderatorValueInputSchema } from "@/lib/network/moderator-input";
import { createSite } from "@/lib/network/create-site";
import { siteInputSchema } from "@/lib/network/site-input";
import type { MetaResultJson } from "@/lib/stats/meta/result-json";
import { writeSubmission } from "@/lib/submissions/write-submission";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";

const providers = await testProviders();
const SITES = 12;

describe.each(providers)("analysis runs as background jobs on %s", (provider) => {
  let database: TestDatabase;
  let actor: Actor;
  let analysisId: number;
  beforeAll(async () => {
    database = await createTestDatabase(provider);
    const { userId } = await createFirstCoordinator(database.db, { email: "coordinator@jobs.example.org", displayName: "Job Coordinator", password: "a-long-enough-password" });
    actor = (await actorForUser(database.db, userId, "session"))!;
    await createModerator(database.db, moderatorInputSchema.parse({ key: "warming", label: "Warming", kind: "numeric", description: "invented" }), actor);
    for (let s = 0; s < SITES; s += 1) {
      const code = `J${s}`;
      await createSite(database.db, siteInputSchema.parse({ code, name: code, species: { scientificName: "Parus major", commonName: "Great tit" }, latitude: 45 + s, longitude: 5, firstYear: 2000, lastYear: 2010 }), actor);
      await setModeratorValue(database.db, code, "warming", moderatorValueInputSchema.parse({ numericValue: 0.1 * s }), actor);
      await writeSubmission(database.db, {
        siteCode: code, kind: "estimates", fileName: "e.csv", sha256: (s + 1).toString(16).padStart(64, "0"),
        rows: [{ outcome: "recruitment", level: "within_year", term: "linear", year: null, value: -0.03 + 0.004 * s + 0.01 * Math.sin(3 * s), standardError: 0.01 + 0.002 * (s % 4), n: 100, scale: "per_day", link: "logit", method: "invented" }],
      });
    }
    const spec = analysisSpecificationSchema.parse({ name: "permuted", outcome: "recruitment", level: "within_year", term: "linear", moderators: ["warming"], permutationTest: { permutations: 3000, seed: 7 } });
    analysisId = (await createAnalysis(database.db, spec, actor)).id;
  });
  afterAll(async () => {
    await database.drop();
  });
  beforeEach(async () => {
    await database.db.job.deleteMany();
  });

  it("queues one run, runs it in blocks with progress, and stores the run with the permutation test", async () => {
    const job = await enqueueAnalysisRun(database.db, analysisId, actor);
    expect((await enqueueAnalysisRun(database.db, analysisId, actor)).id).toBe(job.id);
    expect((await jobsInScope(database.db, { analysisId })).map((j) => [j.id, j.status])).toEqual([[job.id, "queued"]]);
    const outcome = await runNextJob(database.db, JOB_HANDLERS);
    expect(outcome?.status).toBe("succeeded");
    const runId = (outcome!.job.result as { runId: number }).runId;
    const stored = await database.db.analysisRun.findUniqueOrThrow({ where: { id: runId } });
    const fit = (JSON.parse(stored.result) as { fit: MetaResultJson }).fit;
    expect(fit.permutation_test!.permutations).toBe(3000);
    const spec = analysisSpecificationSchema.parse({ name: "permuted", outcome: "recruitment", level: "within_year", term: "linear", moderators: ["warming"], permutationTest: { permutations: 3000, seed: 7 } });
    const direct = await fitAnalysisWithPermutations(spec, await selectAnalysisDataset(database.db, spec));
    expect(fit.permutation_test!.moderators_test_p_value).toBe(direct.permutationTest!.moderatorTestPValue);
    const audit = await database.db.auditEntry.findFirstOrThrow({ where: { action: "analysis.run", entityId: String(runId) } });
    // Recorded under the user who asked for the run, not under the background runner.
    expect(audit.actorUserId).toBe(actor.userId);
    const [summary] = await jobsInScope(database.db, { analysisId });
    expect(summary).toMatchObject({ id: job.id, status: "succeeded", runId, progress: 1 });
  });

  it("stores nothing when the job is cancelled while it runs", async () => {
    const runsBefore = await database.db.analysisRun.count({ where: { analysisId } });
    const job = await enqueueAnalysisRun(database.db, analysisId, actor);
    // Cancel as soon as the first block reports progress: the next report stops the run.
    const handlers = {
      ...JOB_HANDLERS,
      run_analysis: async (context: Parameters<(typeof JOB_HANDLERS)["run_analysis"]>[0]) =>
        JOB_HANDLERS.run_analysis!({
          ...context,
          progress: async (fraction, message) => {
            if (fraction > 0.05) await cancelJob(database.db, job.id);
            await context.progress(fraction, message);
          },
        }),
    };
    const outcome = await runNextJob(database.db, handlers);
    expect(outcome?.status).toBe("cancelled");
    expect((await getJob(database.db, job.id)).status).toBe("cancelled");
    expect(await database.db.analysisRun.count({ where: { analysisId } })).toBe(runsBefore);
    expect((await listAnalysisRunJobs(database.db, analysisId)).map((j) => j.status)).toEqual(["cancelled"]);
  });
});
