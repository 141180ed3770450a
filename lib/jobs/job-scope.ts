import type { Db } from "../db/client";
import { listJobs, type JobStatusName, type JobView } from "./job-queue";
import { listAnalysisRunJobs } from "./run-analysis-job";

/** Whose background work a page shows: one site's, or one analysis's runs. */
export type JobScope = { siteId: number } | { analysisId: number };

/** A job as a page shows it (plain values, for the browser). */
export interface JobSummary {
  id: number;
  kind: string;
  status: JobStatusName;
  /** 0..1 */
  progress: number;
  message: string | null;
  createdAt: string;
  finishedAt: string | null;
  /** For a finished analysis run: the run it stored. */
  runId: number | null;
}

export const ACTIVE_STATUSES: readonly JobStatusName[] = ["queued", "running"];

export function isActive(job: Pick<JobSummary, "status">): boolean {
  return ACTIVE_STATUSES.includes(job.status);
}

function summary(job: JobView): JobSummary {
  const result = job.result as { runId?: unknown } | null;
  return {
    id: job.id,
    kind: job.kind,
    status: job.status,
    progress: job.progress,
    message: job.message,
    createdAt: job.createdAt.toISOString(),
    finishedAt: job.finishedAt?.toISOString() ?? null,
    runId: typeof result?.runId === "number" ? result.runId : null,
  };
}

/** The scope's queued and running jobs, oldest first, then its most recent finished one. */
export async function jobsInScope(db: Db, scope: JobScope): Promise<JobSummary[]> {
  const jobs = "siteId" in scope ? await listJobs(db, { siteId: scope.siteId }, 50) : await listAnalysisRunJobs(db, scope.analysisId);
  const active = jobs.filter(isActive).reverse();
  const lastFinished = jobs.find((job) => !isActive(job));
  return [...active, ...(lastFinished ? [lastFinished] : [])].map(summary);
}
