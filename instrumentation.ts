/**
 * Runs once when the server starts: brings the database up to the newest migration, so a fresh
 * clone or an upgraded server never serves against an old schema, then starts the background job
 * process (estimate recomputation after uploads, long analysis runs; lib/jobs/job-process.ts),
 * which first re-queues jobs a crash interrupted.
 */
export async function register(): Promise<void> {
  if (process.env.NEXT_RUNTIME !== "nodejs") return;
  const { readEnv } = await import("./lib/config/env");
  const { migrateDatabase } = await import("./lib/db/migrate");
  const env = readEnv();
  const report = await migrateDatabase(env.DATABASE_URL);
  if (report.applied.length) console.log(`PhenoPool: applied migrations ${report.applied.join(", ")}`);
  console.log(
    `PhenoPool: limits: uploads up to ${env.PHENOPOOL_MAX_UPLOAD_BYTES} bytes (PHENOPOOL_MAX_UPLOAD_BYTES) and ${env.PHENOPOOL_MAX_UPLOAD_ROWS} rows (PHENOPOOL_MAX_UPLOAD_ROWS); ` +
      `JSON bodies up to ${env.PHENOPOOL_MAX_JSON_BODY_BYTES} bytes (PHENOPOOL_MAX_JSON_BODY_BYTES)`,
  );
  const { startServerJobRunner } = await import("./lib/jobs/server-job-runner");
  startServerJobRunner();
}
