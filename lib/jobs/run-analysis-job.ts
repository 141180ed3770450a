import { z } from "zod";
import type { Db } from "../db/client";
import type { Actor } from "../auth/actor";
import { actorForUser } from "../auth/actor";
import { AppError } from "../errors/app-error";
import { runAnalysis } from "../analyses/run-analysis";
import { enqueueJob, jobView, type JobView } from "./job-queue";
import type { JobHandler } from "./job-runner";

/** Runs a saved analysis whose permutation test makes it long, off the request path. */
export const RUN_ANALYSIS = "run_analysis";

export const runAnalysisJobPayloadSchema = z.object({
  analysisId: z.number().int().positive(),
  /** Who asked for the run: the run's audit entry names them. */
  requestedByUserId: z.number().int().positive(),
});
export type RunAnalysisJobPayload = z.infer<typeof runAnalysisJobPayloadSchema>;

function payloadOf(payload: string): RunAnalysisJobPayload | null {
  try {
    const parsed = runAnalysisJobPayloadSchema.safeParse(JSON.parse(payload));
    return parsed.success ? parsed.data : null;
  } catch {
    return null;
  }
}

/** The analysis's run jobs, newest first (at most the last `take` run jobs of the network are looked at). */
export async function listAnalysisRunJobs(db: Db, analysisId: number, take = 200): Promise<JobView[]> {
  const rows = await db.job.findMany({ where: { kind: RUN_ANALYSIS }, orderBy: { id: "desc" }, take });
  return rows.filter((row) => payloadOf(row.payload)?.analysisId === analysisId).map(jobView);
}

/** The analysis a run job is for, or null for another kind of job. */
export async function analysisOfJob(db: Db, jobId: number): Promise<number | null> {
  const row = await db.job.findUnique({ where: { id: jobId }, select: { kind: true, payload: true } });
  return row?.kind === RUN_ANALYSIS ? (payloadOf(row.payload)?.analysisId ?? null) : null;
}

/**
 * Queues a run of the analysis, unless one is already queued or running (returned instead).
 * Throws AppError invalid_input when the actor is not a user (a run is audited under a person).
 */
export async function enqueueAnalysisRun(db: Db, analysisId: number, actor: Actor): Promise<JobView> {
  if (actor.userId === null) throw new AppError("invalid_input", "a background run needs a signed-in user to record it under");
  const active = (await listAnalysisRunJobs(db, analysisId)).find((job) => job.status === "queued" || job.status === "running");
  if (active) return active;
  return enqueueJob(db, { kind: RUN_ANALYSIS, payload: runAnalysisJobPayloadSchema.parse({ analysisId, requestedByUserId: actor.userId }) });
}

export const runAnalysisJob: JobHandler = async (context) => {
  const payload = runAnalysisJobPayloadSchema.parse(context.payload);
  const actor = await actorForUser(context.db, payload.requestedByUserId, "session");
  if (!actor) throw new AppError("forbidden", `the user who asked for this run (${payload.requestedByUserId}) is no longer active`);
  await context.progress(0.01, "selecting the estimates");
  const run = await runAnalysis(context.db, payload.analysisId, actor, {
    progress: async (fraction, message) => {
      context.signal.throwIfAborted();
      await context.progress(0.02 + 0.97 * fraction, message);
    },
  });
  await context.progress(1, `stored as run ${run.id}`);
  return { analysisId: payload.analysisId, runId: run.id };
};
