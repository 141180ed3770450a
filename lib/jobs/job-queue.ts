import type { Db, DbTransaction } from "../db/client";
import { AppError } from "../errors/app-error";

export type JobStatusName = "queued" | "running" | "succeeded" | "failed" | "cancelled";

/** A job as the pages, the API and the CLI show it. */
export interface JobView {
  id: number;
  kind: string;
  status: JobStatusName;
  /** 0..1 */
  progress: number;
  message: string | null;
  /** The job's output when it succeeded (parsed JSON). */
  result: unknown;
  siteId: number | null;
  createdAt: Date;
  startedAt: Date | null;
  finishedAt: Date | null;
}

type JobRow = {
  id: number;
  kind: string;
  status: JobStatusName;
  progress: number;
  message: string | null;
  result: string | null;
  siteId: number | null;
  createdAt: Date;
  startedAt: Date | null;
  finishedAt: Date | null;
};

export function jobView(row: JobRow): JobView {
  let result: unknown = null;
  if (row.result !== null) {
    try {
      result = JSON.parse(row.result);
    } catch {
      result = row.result;
    }
  }
  return { ...row, result };
}

/** Queues a job; a runner picks it up in creation order. `payload` is stored as JSON. */
export async function enqueueJob(db: Db | DbTransaction, input: { kind: string; payload: unknown; siteId?: number | null }): Promise<JobView> {
  const row = await db.job.create({ data: { kind: input.kind, payload: JSON.stringify(input.payload ?? null), siteId: input.siteId ?? null } });
  return jobView(row);
}

/** One job. Throws AppError not_found for an unknown id. */
export async function getJob(db: Db, id: number): Promise<JobView> {
  const row = await db.job.findUnique({ where: { id } });
  if (!row) throw new AppError("not_found", `job ${id} does not exist`, [{ field: "id", message: "unknown job", value: String(id) }]);
  return jobView(row);
}

/** Jobs, newest first, optionally of one site, kind or status. */
export async function listJobs(db: Db, filter: { siteId?: number; kind?: string; status?: JobStatusName[] } = {}, take = 100): Promise<JobView[]> {
  const rows = await db.job.findMany({
    where: {
      ...(filter.siteId !== undefined ? { siteId: filter.siteId } : {}),
      ...(filter.kind ? { kind: filter.kind } : {}),
      ...(filter.status?.length ? { status: { in: filter.status } } : {}),
    },
    orderBy: { id: "desc" },
    take,
  });
  return rows.map(jobView);
}

/**
 * Cancels a queued or running job. A queued job never starts; a running one is told through its
 * abort signal at its next progress report and its outcome is not recorded as success. Cancelling
 * a finished job changes nothing and says so (conflict).
 */
export async function cancelJob(db: Db, id: number, reason = "cancelled on request"): Promise<JobView> {
  const now = new Date();
  const updated = await db.job.updateMany({
    where: { id, status: { in: ["queued", "running"] } },
    data: { status: "cancelled", message: reason, finishedAt: now },
  });
  const job = await getJob(db, id);
  if (updated.count === 0) throw new AppError("conflict", `job ${id} has already ${job.status === "cancelled" ? "been cancelled" : job.status}`);
  return job;
}
