import { createHash } from "node:crypto";
import { z } from "zod";
import type { Db } from "../db/client";
import type { Actor } from "../auth/actor";
import { recordAudit } from "../audit/record-audit";
import { submissionKindSchema, type SubmissionKindName } from "../ingest/schemas/vocabulary";
import { KIND_RULES } from "../ingest/submission-kind-rules";
import { enqueueSiteRecompute } from "../jobs/recompute-site-estimates-job";
import { wakeServerJobRunner } from "../jobs/server-job-runner";
import { siteCodeSchema } from "../network/site-input";
import { writeSubmission } from "./write-submission";
import { getSubmission, type SubmissionSummary } from "./list-submissions";
import { uploadLimitsFromEnv } from "./upload-request";
import { AppError, type FieldError } from "../errors/app-error";

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

export interface SubmissionWriteReply {
  submission: SubmissionSummary;
  supersededId: number | null;
  unchanged: boolean;
  /** The queued recomputation of the site's estimates, when new brood records or covariates call for one. */
  recomputeJobId: number | null;
}

/** The fields a JSON row of `kind` may carry: those of its row schema. */
function rowFieldsOf(kind: SubmissionKindName): ReadonlySet<string> {
  const schema = KIND_RULES[kind].schema as unknown as { shape?: Record<string, unknown> };
  if (!schema.shape) throw new Error(`the row schema of ${kind} has no fields to list`);
  return new Set(Object.keys(schema.shape));
}

/** Listed problems for keys no field reads (a misspelt "hatchDate" would otherwise be dropped unseen). */
function unknownFieldErrors(input: JsonSubmission, listed = 100): FieldError[] {
  const fields = rowFieldsOf(input.kind);
  const errors: FieldError[] = [];
  for (const [index, row] of input.rows.entries()) {
    for (const key of Object.keys(row)) {
      if (fields.has(key)) continue;
      errors.push({ row: index + 1, field: key, file: input.fileName, message: `"${key}" is not a field of a ${input.kind} row (fields: ${[...fields].join(", ")}); nothing was written` });
      if (errors.length >= listed) return errors;
    }
  }
  return errors;
}

/**
 * Writes a JSON submission whole or not at all (see writeSubmission), with its audit entry and,
 * as for an uploaded file, the queued recomputation of the site's estimates when it brings brood
 * records (or covariates of a site with brood records). Its SHA-256 is taken over the rows as
 * compact JSON, so sending the same rows again is recognised as unchanged.
 * Throws AppError invalid_input listing every bad row and every key no field of the kind reads,
 * not_found for an unknown site, too_large for more rows than PHENOPOOL_MAX_UPLOAD_ROWS.
 */
export async function submitJsonRows(db: Db, input: JsonSubmission, actor: Actor): Promise<SubmissionWriteReply> {
  const unknown = unknownFieldErrors(input);
  if (unknown.length) {
    throw new AppError("invalid_input", `${input.fileName}: rows carry fields a ${input.kind} row does not have (first: "${unknown[0]!.field}" in row ${unknown[0]!.row}); nothing was written`, unknown);
  }
  const { maxRows } = uploadLimitsFromEnv();
  if (input.rows.length > maxRows) {
    throw new AppError("too_large", `${input.fileName} has ${input.rows.length} rows; this server accepts at most ${maxRows} rows in one submission (set by PHENOPOOL_MAX_UPLOAD_ROWS); nothing was written`, [
      { field: "rows", message: `more than ${maxRows} rows`, file: input.fileName },
    ]);
  }
  const sha256 = createHash("sha256").update(JSON.stringify(input.rows)).digest("hex");
  let recomputeJobId: number | null = null;
  const written = await writeSubmission(db, {
    siteCode: input.siteCode,
    kind: input.kind,
    fileName: input.fileName,
    sha256,
    rows: input.rows,
    submittedById: actor.userId,
    alsoInTransaction: async (tx, { siteId, submissionId, supersededId }) => {
      await recordAudit(tx, actor, {
        action: "submission.json",
        entityType: "submission",
        entityId: submissionId,
        before: supersededId === null ? null : { currentSubmissionId: supersededId },
        after: { siteCode: input.siteCode, kind: input.kind, fileName: input.fileName, rowCount: input.rows.length },
        sha256,
      });
      const needsRecompute =
        input.kind === "brood_records" ||
        (input.kind === "site_year_covariates" && (await tx.submission.count({ where: { siteId, kind: "brood_records", status: "accepted" } })) > 0);
      if (needsRecompute) recomputeJobId = (await enqueueSiteRecompute(tx, { siteId, submissionId })).id;
    },
  });
  if (recomputeJobId !== null) wakeServerJobRunner();
  return { submission: await getSubmission(db, written.submissionId), supersededId: written.supersededId, unchanged: written.unchanged, recomputeJobId };
}
