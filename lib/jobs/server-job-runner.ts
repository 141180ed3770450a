import { getDb } from "../db/client";
import { JOB_HANDLERS } from "./job-handlers";
import { JobRunner } from "./job-runner";

const holder = globalThis as unknown as { phenopoolJobRunner?: JobRunner };

/**
 * Starts the process's one job runner (idempotent: later calls return the same runner, also
 * across hot reloads). For the web server, call once at start-up (instrumentation.ts).
 */
export async function startServerJobRunner(): Promise<JobRunner> {
  if (!holder.phenopoolJobRunner) {
    holder.phenopoolJobRunner = new JobRunner(getDb(), JOB_HANDLERS, {
      onError: (error) => console.error("PhenoPool job runner:", error),
    });
  }
  await holder.phenopoolJobRunner.start();
  return holder.phenopoolJobRunner;
}

/** Tells the process's runner, if one was started, that a job was queued. */
export function wakeServerJobRunner(): void {
  holder.phenopoolJobRunner?.wake();
}
