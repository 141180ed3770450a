"use server";

import { revalidatePath } from "next/cache";
import { z } from "zod";
import { getDb } from "@/lib/db/client";
import { AppError } from "@/lib/errors/app-error";
import { cancelJob, getJob } from "@/lib/jobs/job-queue";
import { jobsInScope, type JobScope, type JobSummary } from "@/lib/jobs/job-scope";
import { analysisOfJob } from "@/lib/jobs/run-analysis-job";
import { requireActionActor } from "./current-actor";
import { formStateFromError, type FormState } from "./form-state";

const scopeSchema = z.union([z.object({ siteCode: z.string().min(1).max(64) }), z.object({ analysisId: z.number().int().positive().max(2 ** 31 - 1) })]);
export type JobScopeInput = z.infer<typeof scopeSchema>;

async function resolveScope(input: JobScopeInput): Promise<JobScope> {
  const parsed = scopeSchema.parse(input);
  if (!("siteCode" in parsed)) return { analysisId: parsed.analysisId };
  const site = await getDb().site.findUnique({ where: { code: parsed.siteCode }, select: { id: true } });
  if (!site) throw new AppError("not_found", `site ${parsed.siteCode} does not exist`);
  return { siteId: site.id };
}

/** The scope's jobs for the progress display: site jobs to anyone who reads the network, analysis runs to those who read pooled results. */
export async function pollJobsAction(input: JobScopeInput): Promise<{ jobs: JobSummary[]; error: string | null }> {
  try {
    const scope = await resolveScope(input);
    await requireActionActor("siteId" in scope ? "network.read" : "pooled_results.read");
    return { jobs: await jobsInScope(getDb(), scope), error: null };
  } catch (error) {
    return { jobs: [], error: formStateFromError(error).message };
  }
}

const cancelSchema = z.object({ jobId: z.coerce.number().int().positive().max(2 ** 31 - 1) });

/**
 * Cancels a queued or running job. Who may: for a site's recomputation, whoever may submit data
 * to that site; for an analysis run, whoever may run analyses.
 */
export async function cancelJobAction(_previous: FormState, form: FormData): Promise<FormState> {
  try {
    const { jobId } = cancelSchema.parse({ jobId: form.get("jobId") });
    const db = getDb();
    const job = await getJob(db, jobId);
    const analysisId = await analysisOfJob(db, jobId);
    if (job.siteId !== null) await requireActionActor("submission.create", { siteId: job.siteId });
    else if (analysisId !== null) await requireActionActor("analysis.run");
    else throw new AppError("forbidden", `job ${jobId} is not one a page can cancel`);
    await cancelJob(db, jobId, "cancelled from the page");
    if (job.siteId !== null) {
      const site = await db.site.findUnique({ where: { id: job.siteId }, select: { code: true } });
      if (site) revalidatePath(`/sites/${encodeURIComponent(site.code)}`);
    } else revalidatePath(`/analyses/${analysisId}`);
    return { message: null, fieldErrors: [], done: `Job ${jobId} cancelled.` };
  } catch (error) {
    return formStateFromError(error);
  }
}
