/**
 * The background job process: `node --import tsx lib/jobs/job-process.ts`, started and watched by
 * the web server (server-job-runner.ts). Jobs are long computations (a site's estimates with
 * their bootstrap, permutation tests); in a process of their own they run on another core and
 * never hold up the server's requests.
 *
 * On start it re-queues the jobs a stopped process left running, then runs queued jobs one at a
 * time. The message "wake" makes it look for a new job at once. When the server goes away (its
 * IPC channel closes: a crash, a restart, a stop) this process ends at once too; the job it was
 * running is left running in the database, and the next start re-queues and redoes it. Each job
 * writes its results in one transaction, so an interrupted job leaves the results as they were.
 */
import { readEnv } from "../config/env";
import { createDb } from "../db/client";
import { JOB_HANDLERS } from "./job-handlers";
import { JobRunner } from "./job-runner";
import { READY_MESSAGE, WAKE_MESSAGE } from "./server-job-runner";

/**
 * On SQLite the server's uploads hold the write lock for as long as their rows take to go in, one
 * after another under load: a job's writes wait for a gap (this process serves no requests).
 */
const JOB_SQLITE_BUSY_TIMEOUT_MS = 10 * 60_000;

async function main(): Promise<void> {
  process.on("disconnect", () => process.exit(0));
  const db = createDb(readEnv().DATABASE_URL, { sqliteBusyTimeoutMs: JOB_SQLITE_BUSY_TIMEOUT_MS });
  const runner = new JobRunner(db, JOB_HANDLERS, { onError: (error) => console.error("PhenoPool job runner:", error) });
  process.on("message", (message) => {
    if (message === WAKE_MESSAGE) runner.wake();
  });
  await runner.start();
  process.send?.(READY_MESSAGE);
}

main().catch((error: unknown) => {
  console.error("PhenoPool job process could not start:", error);
  process.exit(1);
});
