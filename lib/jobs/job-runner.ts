import type { Db } from "../db/client";
import { toAppError } from "../errors/app-error";
import { jobView, type JobView } from "./job-queue";

/** What a job's handler gets: its input, a way to report progress, and a signal that it was cancelled. */
export interface JobContext {
  db: Db;
  jobId: number;
  payload: unknown;
  siteId: number | null;
  /** Aborted when the job is cancelled while it runs. */
  signal: AbortSignal;
  /** Records progress (0..1) and a message; throws JobCancelledError when the job was cancelled. */
  progress: (fraction: number, message?: string) => Promise<void>;
}

/** Does the work of one kind of job and returns its result (stored as JSON). */
export type JobHandler = (context: JobContext) => Promise<unknown>;
export type JobHandlers = Readonly<Record<string, JobHandler>>;

export class JobCancelledError extends Error {
  constructor(jobId: number) {
    super(`job ${jobId} was cancelled`);
    this.name = "JobCancelledError";
  }
}

export interface JobOutcome {
  job: JobView;
  status: "succeeded" | "failed" | "cancelled";
}

/** How often a running job's row is read to notice a cancellation between progress reports. */
const CANCEL_POLL_MS = 1_000;

/**
 * Puts jobs left `running` by a process that stopped (crash, restart) back in the queue. Call it
 * once when the one runner of the deployment starts; returns how many were re-queued.
 */
export async function requeueInterruptedJobs(db: Db): Promise<number> {
  const updated = await db.job.updateMany({
    where: { status: "running" },
    data: { status: "queued", progress: 0, startedAt: null, message: "re-queued: the process running it stopped" },
  });
  return updated.count;
}

/**
 * Claims the oldest queued job for this runner with a conditional update (status queued ->
 * running), so two runners never take the same job on SQLite or PostgreSQL. Returns null when
 * the queue is empty.
 */
export async function claimNextJob(db: Db, kinds?: readonly string[]): Promise<{ id: number; kind: string; payload: string; siteId: number | null } | null> {
  for (let attempt = 0; attempt < 20; attempt++) {
    const next = await db.job.findFirst({
      where: { status: "queued", ...(kinds ? { kind: { in: [...kinds] } } : {}) },
      orderBy: { id: "asc" },
      select: { id: true, kind: true, payload: true, siteId: true },
    });
    if (!next) return null;
    const claimed = await db.job.updateMany({
      where: { id: next.id, status: "queued" },
      data: { status: "running", startedAt: new Date(), progress: 0, message: null },
    });
    if (claimed.count === 1) return next;
    // Another runner took it first: try the next one.
  }
  return null;
}

async function finish(db: Db, id: number, status: "succeeded" | "failed", data: { message?: string; result?: unknown }): Promise<boolean> {
  const updated = await db.job.updateMany({
    where: { id, status: "running" },
    data: {
      status,
      finishedAt: new Date(),
      ...(status === "succeeded" ? { progress: 1 } : {}),
      ...(data.message !== undefined ? { message: data.message } : {}),
      ...(data.result !== undefined ? { result: JSON.stringify(data.result) } : {}),
    },
  });
  return updated.count === 1;
}

/**
 * Claims the oldest queued job of a kind `handlers` knows and runs it to the end: success with
 * its result, failure with the error's message, or cancellation. Jobs of other kinds stay queued
 * for a runner that knows them. Returns null when no such job was queued.
 */
export async function runNextJob(db: Db, handlers: JobHandlers): Promise<JobOutcome | null> {
  const claimed = await claimNextJob(db, Object.keys(handlers));
  if (!claimed) return null;
  const controller = new AbortController();
  const watch = setInterval(() => {
    void db.job
      .findUnique({ where: { id: claimed.id }, select: { status: true } })
      .then((row) => {
        if (row?.status !== "running") controller.abort();
      })
      .catch(() => undefined);
  }, CANCEL_POLL_MS);
  watch.unref?.();
  const context: JobContext = {
    db,
    jobId: claimed.id,
    siteId: claimed.siteId,
    payload: JSON.parse(claimed.payload) as unknown,
    signal: controller.signal,
    progress: async (fraction, message) => {
      const updated = await db.job.updateMany({
        where: { id: claimed.id, status: "running" },
        data: { progress: Math.min(1, Math.max(0, fraction)), ...(message !== undefined ? { message } : {}) },
      });
      if (updated.count === 0) {
        controller.abort();
        throw new JobCancelledError(claimed.id);
      }
    },
  };
  let status: JobOutcome["status"];
  try {
    const handler = handlers[claimed.kind]!;
    if (controller.signal.aborted) throw new JobCancelledError(claimed.id);
    const result = await handler(context);
    status = (await finish(db, claimed.id, "succeeded", { result })) ? "succeeded" : "cancelled";
  } catch (error) {
    if (error instanceof JobCancelledError || controller.signal.aborted) {
      status = "cancelled";
    } else {
      const appError = toAppError(error);
      status = (await finish(db, claimed.id, "failed", { message: appError.message })) ? "failed" : "cancelled";
    }
  } finally {
    clearInterval(watch);
  }
  const row = await db.job.findUniqueOrThrow({ where: { id: claimed.id } });
  return { job: jobView(row), status };
}

/** Runs queued jobs one after another until the queue is empty; returns their outcomes. */
export async function runQueuedJobs(db: Db, handlers: JobHandlers): Promise<JobOutcome[]> {
  const outcomes: JobOutcome[] = [];
  for (let outcome = await runNextJob(db, handlers); outcome; outcome = await runNextJob(db, handlers)) outcomes.push(outcome);
  return outcomes;
}

export interface JobRunnerOptions {
  /** How often an idle runner looks for new jobs. Default 2 s. */
  pollIntervalMs?: number;
  /** Told about failures of the runner itself (not of jobs, which are recorded on their rows). */
  onError?: (error: unknown) => void;
}

/**
 * Runs jobs one at a time in the background of a long-lived process (the web server) until
 * stopped. On start it re-queues jobs left running by a previous process. `wake()` makes it look
 * at once (after a job is queued); `stop()` resolves when the job under way has finished.
 */
export class JobRunner {
  private stopped = true;
  private timer: ReturnType<typeof setTimeout> | null = null;
  private loop: Promise<void> | null = null;
  private wakeUp: (() => void) | null = null;

  constructor(
    private readonly db: Db,
    private readonly handlers: JobHandlers,
    private readonly options: JobRunnerOptions = {},
  ) {}

  get running(): boolean {
    return !this.stopped;
  }

  async start(): Promise<void> {
    if (!this.stopped) return;
    this.stopped = false;
    await requeueInterruptedJobs(this.db);
    this.loop = this.run();
  }

  wake(): void {
    this.wakeUp?.();
  }

  async stop(): Promise<void> {
    this.stopped = true;
    this.wake();
    await this.loop;
    this.loop = null;
  }

  private async run(): Promise<void> {
    const pollIntervalMs = this.options.pollIntervalMs ?? 2_000;
    while (!this.stopped) {
      let worked = false;
      try {
        worked = (await runNextJob(this.db, this.handlers)) !== null;
      } catch (error) {
        this.options.onError?.(error);
      }
      if (worked || this.stopped) continue;
      await new Promise<void>((resolve) => {
        this.wakeUp = resolve;
        this.timer = setTimeout(resolve, pollIntervalMs);
        this.timer.unref?.();
      });
      if (this.timer) clearTimeout(this.timer);
      this.wakeUp = null;
    }
  }
}
