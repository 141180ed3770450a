"use server";

import { revalidatePath } from "next/cache";
import { z } from "zod";
import { getDb } from "@/lib/db/client";
import { AppError } from "@/lib/errors/app-error";
import { restoreSubmission } from "@/lib/submissions/restore-submission";
import { requireActionActor } from "../../_server/current-actor";
import { formStateFromError, type FormState } from "../../_server/form-state";

const restoreFormSchema = z.object({
  submissionId: z.coerce.number().int().positive().max(2 ** 31 - 1),
  expectedCurrentSubmissionId: z.union([z.literal("none").transform(() => null), z.coerce.number().int().positive().max(2 ** 31 - 1)]),
});

/**
 * Makes an earlier submission the site's current one again (a new submission copying its rows),
 * refused when the current one changed since the diff was shown. Authorized as submission.restore
 * on the submission's own site.
 */
export async function restoreSubmissionAction(_previous: FormState, form: FormData): Promise<FormState> {
  try {
    const parsed = restoreFormSchema.safeParse({ submissionId: form.get("submissionId"), expectedCurrentSubmissionId: form.get("expectedCurrentSubmissionId") });
    if (!parsed.success) throw new AppError("invalid_input", "the restore form is incomplete; open the version's restore preview again");
    const db = getDb();
    const target = await db.submission.findUnique({ where: { id: parsed.data.submissionId }, select: { siteId: true, site: { select: { code: true } } } });
    if (!target) throw new AppError("not_found", `submission ${parsed.data.submissionId} does not exist`);
    const actor = await requireActionActor("submission.restore", { siteId: target.siteId });
    const result = await restoreSubmission(db, parsed.data, actor);
    revalidatePath(`/sites/${encodeURIComponent(target.site.code)}`);
    return {
      message: null,
      fieldErrors: [],
      done: `Restored: submission ${result.restoredFromId} is current again as submission ${result.submissionId} (${result.rowCount} rows).${result.job ? ` The site's estimates are being recomputed (job ${result.job.id}).` : ""}`,
    };
  } catch (error) {
    return formStateFromError(error);
  }
}
