/**
 * Runs once when the server starts: brings the database up to the newest migration, so a fresh
 * clone or an upgraded server never serves against an old schema, then starts the background job
 * runner (estimate recomputation after uploads), which first re-queues jobs a crash interrupted.
 */
export async function register(): Promise<void> {
  if (process.env.NEXT_RUNTIME !== "nodejs") return;
  const { readEnv } = await import("./lib/config/env");
  const { migrateDatabase } = await import("./lib/db/migrate");
  const report = await migrateDatabase(readEnv().DATABASE_URL);
  if (report.applied.length) console.log(`PhenoPool: applied migrations ${report.applied.join(", ")}`);
  const { startServerJobRunner } = await import("./lib/jobs/server-job-runner");
  await startServerJobRunner();
}
