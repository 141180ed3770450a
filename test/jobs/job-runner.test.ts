import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { cancelJob, enqueueJob, getJob } from "@/lib/jobs/job-queue";
import { claimNextJob, JobRunner, requeueInterruptedJobs, runNextJob, runQueuedJobs, type JobHandlers } from "@/lib/jobs/job-runner";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";

const providers = await testProviders();

describe.each(providers)("background jobs on %s", (provider) => {
  let database: TestDatabase;
  beforeAll(async () => {
    database = await createTestDatabase(provider);
  });
  afterAll(async () => {
    await database.drop();
  });
  beforeEach(async () => {
    await database.db.job.deleteMany();
  });

  it("runs queued jobs in order, records progress, results and failures with their message", async () => {
    const seen: number[] = [];
    const handlers: JobHandlers = {
      double: async ({ payload, progress }) => {
        const { value } = payload as { value: number };
        seen.push(value);
        await progress(0.5, "half way");
        return { doubled: value * 2 };
      },
      broken: async () => {
        throw new Error("the site has no brood records");
      },
    };
    const a = await enqueueJob(database.db, { kind: "double", payload: { value: 2 } });
    const b = await enqueueJob(database.db, { kind: "broken", payload: null });
    const c = await enqueueJob(database.db, { kind: "double", payload: { value: 5 } });
    const outcomes = await runQueuedJobs(database.db, handlers);
    expect(outcomes.map((o) => [o.job.id, o.status])).toEqual([
      [a.id, "succeeded"],
      [b.id, "failed"],
      [c.id, "succeeded"],
    ]);
    expect(seen).toEqual([2, 5]);
    expect(await getJob(database.db, a.id)).toMatchObject({ status: "succeeded", progress: 1, message: "half way", result: { doubled: 4 } });
    expect(await getJob(database.db, b.id)).toMatchObject({ status: "failed", message: "the site has no brood records", result: null });
    expect((await getJob(database.db, a.id)).finishedAt).toBeInstanceOf(Date);
  });

  it("never hands one job to two runners claiming at once", async () => {
    for (let i = 0; i < 10; i++) await enqueueJob(database.db, { kind: "noop", payload: i });
    const claims = await Promise.all(Array.from({ length: 14 }, () => claimNextJob(database.db)));
    const ids = claims.filter((c) => c !== null).map((c) => c!.id);
    expect(ids.length).toBe(10);
    expect(new Set(ids).size).toBe(10);
  });

  it("cancels a queued job before it starts and a running one at its next progress report", async () => {
    const queued = await enqueueJob(database.db, { kind: "slow", payload: null });
    await cancelJob(database.db, queued.id);
    expect(await runNextJob(database.db, { slow: async () => "ran" })).toBeNull();
    expect(await getJob(database.db, queued.id)).toMatchObject({ status: "cancelled", message: "cancelled on request" });

    const running = await enqueueJob(database.db, { kind: "slow", payload: null });
    let reachedEnd = false;
    const handlers: JobHandlers = {
      slow: async ({ jobId, progress }) => {
        await progress(0.1, "started");
        await cancelJob(database.db, jobId, "cancelled by the coordinator");
        await progress(0.2, "still going");
        reachedEnd = true;
        return "done";
      },
    };
    const outcome = await runNextJob(database.db, handlers);
    expect(outcome?.status).toBe("cancelled");
    expect(reachedEnd).toBe(false);
    expect(await getJob(database.db, running.id)).toMatchObject({ status: "cancelled", message: "cancelled by the coordinator", result: null });
    await expect(cancelJob(database.db, running.id)).rejects.toThrow("already been cancelled");
  });

  it("puts jobs left running by a stopped process back in the queue when a runner starts", async () => {
    const job = await enqueueJob(database.db, { kind: "echo", payload: "hello" });
    await claimNextJob(database.db);
    expect((await getJob(database.db, job.id)).status).toBe("running");
    expect(await requeueInterruptedJobs(database.db)).toBe(1);
    expect(await getJob(database.db, job.id)).toMatchObject({ status: "queued", message: "re-queued: the process running it stopped" });

    await claimNextJob(database.db);
    const runner = new JobRunner(database.db, { echo: async ({ payload }) => payload }, { pollIntervalMs: 20 });
    await runner.start();
    for (let i = 0; i < 200 && (await getJob(database.db, job.id)).status !== "succeeded"; i++) await new Promise((r) => setTimeout(r, 20));
    const later = await enqueueJob(database.db, { kind: "echo", payload: "again" });
    runner.wake();
    for (let i = 0; i < 200 && (await getJob(database.db, later.id)).status !== "succeeded"; i++) await new Promise((r) => setTimeout(r, 20));
    await runner.stop();
    expect(runner.running).toBe(false);
    expect(await getJob(database.db, job.id)).toMatchObject({ status: "succeeded", result: "hello" });
    expect(await getJob(database.db, later.id)).toMatchObject({ status: "succeeded", result: "again" });
  });
});
