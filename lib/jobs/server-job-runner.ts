import { spawn, type ChildProcess } from "node:child_process";
import { join } from "node:path";

/**
 * The web server's background jobs run in a process of their own (lib/jobs/job-process.ts), which
 * the server starts once and restarts if it dies; see job-process.ts for why and how.
 */

/** The server tells the job process a job was queued... */
export const WAKE_MESSAGE = "wake";
/** ...and the job process says when it has re-queued interrupted jobs and is taking new ones. */
export const READY_MESSAGE = "ready";

/** Restart delays after the job process dies unexpectedly: 1 s, doubling, at most 30 s. */
const FIRST_RESTART_DELAY_MS = 1_000;
const LONGEST_RESTART_DELAY_MS = 30_000;

class JobProcess {
  private child: ChildProcess | null = null;
  private restartDelayMs = FIRST_RESTART_DELAY_MS;

  start(): void {
    // The script is read from the working directory at run time, not bundled.
    const script = join(/*turbopackIgnore: true*/ process.cwd(), "lib", "jobs", "job-process.ts");
    const child = spawn(process.execPath, ["--import", "tsx", script], { cwd: process.cwd(), env: process.env, stdio: ["ignore", "inherit", "inherit", "ipc"] });
    this.child = child;
    child.on("message", (message) => {
      if (message === READY_MESSAGE) this.restartDelayMs = FIRST_RESTART_DELAY_MS;
    });
    child.on("error", (error) => console.error("PhenoPool: the job process could not start:", error.message));
    child.on("exit", (code, signal) => {
      if (this.child !== child) return;
      this.child = null;
      const delay = this.restartDelayMs;
      this.restartDelayMs = Math.min(LONGEST_RESTART_DELAY_MS, delay * 2);
      console.error(`PhenoPool: the job process stopped (${signal ?? `exit ${code}`}); starting it again in ${delay / 1000} s`);
      setTimeout(() => this.start(), delay).unref();
    });
  }

  wake(): void {
    if (this.child?.connected) this.child.send(WAKE_MESSAGE, () => undefined);
  }
}

const holder = globalThis as unknown as { phenopoolJobProcess?: JobProcess };

/**
 * Starts the deployment's job process (idempotent: later calls, also across hot reloads, keep the
 * one running). Call once when the web server starts (instrumentation.ts).
 */
export function startServerJobRunner(): void {
  if (holder.phenopoolJobProcess) return;
  holder.phenopoolJobProcess = new JobProcess();
  holder.phenopoolJobProcess.start();
}

/** Tells the job process, if this process started one, that a job was queued. */
export function wakeServerJobRunner(): void {
  holder.phenopoolJobProcess?.wake();
}
