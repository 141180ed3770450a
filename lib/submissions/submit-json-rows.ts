import { createHash } from "node:crypto";
import { z } from "zod";
import type { Db } from "../db/client";
import type { Actor } from "../auth/actor";
import { submissionKindSchema } from "../ingest/schemas/vocabulary";
import { siteCodeSchema } from "../network/site-input";
import { writeSubmission } from "./write-submission";
import { getSubmission, type SubmissionSummary } from "./list-submissions";

/** The most rows one JSON submission may carry. */
export const MAX_JSON_ROWS = 500_000;

/**
 * A submission sent as JSON rather than a file: rows in PhenoPool's own field names (those of
 * the brood-record, site-year or estimate row schemas), dates as days of year with 1 = 1 January
 * whatever the site's own convention. Each row is validated by the row schema of `kind`.
 */
export const jsonSubmissionSchema = z.object({
  siteCode: siteCodeSchema,
  kind: submissionKindSchema,
  fileName: z.string().trim().min(1).max(255).default("submission.json").describe("Name the submission is listed under."),
  rows: z
    .array(z.record(z.string(), z.unknown()))
    .min(1, "the submission has no rows")
    .max(MAX_JSON_ROWS, `at most ${MAX_JSON_ROWS} rows in one submission`)
    .describe("Rows validated by the row schema of `kind` (BroodRecordRow, SiteYearRow or EstimateRow)."),
});
export type JsonSubmission = z.output<typeof jsonSubmissionSchema>;

export interface JsonSubmissionResult {
  submission: SubmissionSummary;
  supersededId: number | null;
  unchanged: boolean;
}

/**
 * Writes a JSON submission whole or not at all (see writeSubmission). Its SHA-256 is taken over
 * the rows as compact JSON, so sending the same rows again is recognised as unchanged.
 * Throws AppError invalid_input listing every bad row, not_found for an unknown site.
 */
export async function submitJsonRows(db: Db, input: JsonSubmission, actor: Actor): Promise<JsonSubmissionResult> {
  const sha256 = createHash("sha256").update(JSON.stringify(input.rows)).digest("hex");
  const written = await writeSubmission(db, {
    siteCode: input.siteCode,
    kind: input.kind,
    fileName: input.fileName,
    sha256,
    rows: input.rows,
    submittedById: actor.userId,
  });
  return { submission: await getSubmission(db, written.submissionId), supersededId: written.supersededId, unchanged: written.unchanged };
}
