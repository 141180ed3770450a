import { z } from "zod";
import type { Db, DbTransaction } from "../db/client";
import { recomputeSiteEstimates } from "../estimates/recompute-site-estimates";
import { enqueueJob, jobView, type JobView } from "./job-queue";
import type { JobHandler } from "./job-runner";

/** Recomputes one site's estimates from its current brood records and site-year covariates. */
export const RECOMPUTE_SITE_ESTIMATES = "recompute_site_estimates";

export const recomputeJobPayloadSchema = z.object({
  siteId: z.number().int().positive(),
  /** The submission whose acceptance asked for the recomputation (for the record). */
  submissionId: z.number().int().positive().nullable(),
});
export type RecomputeJobPayload = z.infer<typeof recomputeJobPayloadSchema>;

/**
 * Queues a recomputation of the site's estimates, unless one is already queued (it will read the
 * site's data as they are when it runs, so one is enough).
 */
export async function enqueueSiteRecompute(db: Db | DbTransaction, payload: RecomputeJobPayload): Promise<JobView> {
  const queued = await db.job.findFirst({ where: { kind: RECOMPUTE_SITE_ESTIMATES, siteId: payload.siteId, status: "queued" }, orderBy: { id: "asc" } });
  if (queued) return jobView(queued);
  return enqueueJob(db, { kind: RECOMPUTE_SITE_ESTIMATES, payload: recomputeJobPayloadSchema.parse(payload), siteId: payload.siteId });
}

export const recomputeSiteEstimatesJob: JobHandler = async (context) => {
  const payload = recomputeJobPayloadSchema.parse(context.payload);
  const report = await recomputeSiteEstimates(context.db, payload.siteId, {
    signal: context.signal,
    onStep: (step) => context.progress(step.fraction, step.message),
  });
  const refused = report.refused.length ? `; ${report.refused.length} refused` : "";
  await context.progress(1, `${report.estimatesWritten} estimates computed from submission ${report.submissionId}${refused}`);
  return {
    siteId: report.siteId,
    submissionId: report.submissionId,
    estimatesWritten: report.estimatesWritten,
    estimatesReplaced: report.estimatesReplaced,
    refused: report.refused,
    warnings: report.warnings,
    warmingRate: report.warmingRate.written ? { written: true } : report.warmingRate,
  };
};
