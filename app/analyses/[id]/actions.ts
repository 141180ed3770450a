"use server";

import { revalidatePath } from "next/cache";
import { redirect } from "next/navigation";
import { z } from "zod";
import { getDb } from "@/lib/db/client";
import { getAnalysis } from "@/lib/analyses/analyses";
import { runAnalysis } from "@/lib/analyses/run-analysis";
import { enqueueAnalysisRun } from "@/lib/jobs/run-analysis-job";
import { wakeServerJobRunner } from "@/lib/jobs/server-job-runner";
import { requireActionActor } from "../../_server/current-actor";
import { formStateFromError, type FormState } from "../../_server/form-state";

const analysisIdSchema = z.coerce.number().int().positive().max(2 ** 31 - 1);

/**
 * Runs the analysis on today's data and opens the new run; an analysis with a permutation test
 * is queued as a background job instead (the page shows its progress and can cancel it).
 */
export async function runAnalysisAction(_previous: FormState, form: FormData): Promise<FormState> {
  let target: string;
  try {
    const analysisId = analysisIdSchema.parse(form.get("analysisId"));
    const db = getDb();
    const actor = await requireActionActor("analysis.run");
    const analysis = await getAnalysis(db, analysisId);
    if (analysis.specification.permutationTest) {
      const job = await enqueueAnalysisRun(db, analysisId, actor);
      wakeServerJobRunner();
      revalidatePath(`/analyses/${analysisId}`);
      return { message: null, fieldErrors: [], done: `Queued as background job ${job.id}; its progress is shown below.` };
    }
    const run = await runAnalysis(db, analysisId, actor);
    target = `/analyses/${analysisId}?run=${run.id}`;
  } catch (error) {
    return formStateFromError(error);
  }
  redirect(target);
}
