"use server";

import { redirect } from "next/navigation";
import { z } from "zod";
import { getDb } from "@/lib/db/client";
import { runAnalysis } from "@/lib/analyses/run-analysis";
import { requireActionActor } from "../../_server/current-actor";
import { formStateFromError, type FormState } from "../../_server/form-state";

const analysisIdSchema = z.coerce.number().int().positive().max(2 ** 31 - 1);

export async function runAnalysisAction(_previous: FormState, form: FormData): Promise<FormState> {
  let target: string;
  try {
    const analysisId = analysisIdSchema.parse(form.get("analysisId"));
    const db = getDb();
    const actor = await requireActionActor("analysis.run");
    const run = await runAnalysis(db, analysisId, actor);
    target = `/analyses/${analysisId}?run=${run.id}`;
  } catch (error) {
    return formStateFromError(error);
  }
  redirect(target);
}
