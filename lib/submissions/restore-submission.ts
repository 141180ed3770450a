import { z } from "zod";
import type { Actor } from "../auth/actor";
import { recordAudit } from "../audit/record-audit";
import { copyBroodRecords } from "../db/brood-record-sql";
import type { Db, DbTransaction } from "../db/client";
import { AppError } from "../errors/app-error";
import type { SubmissionKindName } from "../ingest/schemas/vocabulary";
import type { JobView } from "../jobs/job-queue";
import { enqueueSiteRecompute } from "../jobs/recompute-site-estimates-job";
import { wakeServerJobRunner } from "../jobs/server-job-runner";
import { diffStoredSubmissions, type SubmissionDiff } from "./submission-diff";
import { parseUploadRequest } from "./upload-request";
import { TRANSACTION_MAX_WAIT_MS, TRANSACTION_TIMEOUT_MS } from "./write-submission";

export const restoreSubmissionRequestSchema = z.object({
  /** The earlier (superseded) submission to make current again. */
  submissionId: z.number().int().positive(),
  /** The current submission the user saw the diff against (null: none); refuse if it changed. */
  expectedCurrentSubmissionId: z.number().int().positive().nullable().optional(),
});
export type RestoreSubmissionRequest = z.input<typeof restoreSubmissionRequestSchema>;

export interface RestorePreview {
  submissionId: number;
  siteCode: string;
  kind: SubmissionKindName;
  currentSubmissionId: number | null;
  /** What restoring would change, against the current submission. */
  diff: SubmissionDiff;
}

export interface RestoreResult {
  /** The new submission: a copy of the restored one's rows, now the site's current one of its kind. */
  submissionId: number;
  restoredFromId: number;
  supersededId: number | null;
  rowCount: number;
  job: JobView | null;
}

async function loadTarget(db: Db, submissionId: number) {
  const target = await db.submission.findUnique({
    where: { id: submissionId },
    select: { id: true, siteId: true, kind: true, fileName: true, sha256: true, rowCount: true, status: true, site: { select: { code: true } } },
  });
  if (!target) throw new AppError("not_found", `submission ${submissionId} does not exist`, [{ field: "submissionId", message: "unknown submission", value: String(submissionId) }]);
  return target;
}

/** The diff that restoring an earlier submission would make. Throws not_found for an unknown id. */
export async function previewRestore(db: Db, submissionId: number): Promise<RestorePreview> {
  const target = await loadTarget(db, submissionId);
  const current = await db.submission.findFirst({ where: { siteId: target.siteId, kind: target.kind, status: "accepted" }, select: { id: true } });
  return {
    submissionId: target.id,
    siteCode: target.site.code,
    kind: target.kind,
    currentSubmissionId: current?.id ?? null,
    diff: await diffStoredSubmissions(db, target.kind, current?.id ?? null, target.id),
  };
}

async function copyRows(tx: DbTransaction, kind: SubmissionKindName, fromId: number, toId: number): Promise<number> {
  if (kind === "brood_records") return copyBroodRecords(tx, fromId, toId);
  if (kind === "site_year_covariates") {
    const rows = await tx.siteYear.findMany({ where: { submissionId: fromId }, orderBy: { id: "asc" } });
    await tx.siteYear.createMany({ data: rows.map(({ id: _id, submissionId: _from, ...row }) => ({ ...row, submissionId: toId })) });
    return rows.length;
  }
  const rows = await tx.estimate.findMany({ where: { submissionId: fromId, source: "uploaded" }, orderBy: { id: "asc" } });
  await tx.estimate.createMany({ data: rows.map(({ id: _id, submissionId: _from, createdAt: _at, ...row }) => ({ ...row, submissionId: toId })) });
  return rows.length;
}

/**
 * Makes an earlier submission the site's current one of its kind again. The restore is itself a
 * new submission (same file name and SHA-256, the earlier rows copied, submitted by `actor`) that
 * supersedes the current one, so the history stays one line in which every change of the current
 * version is recorded with who made it and when; the audit trail names the restored submission.
 * Nothing is changed when the submission is already the current one (conflict).
 *
 * Throws not_found for an unknown submission, conflict when it is current already or the current
 * submission is no longer `expectedCurrentSubmissionId`.
 */
export async function restoreSubmission(db: Db, request: RestoreSubmissionRequest, actor: Actor): Promise<RestoreResult> {
  const parsed = parseUploadRequest(restoreSubmissionRequestSchema, request);
  const target = await loadTarget(db, parsed.submissionId);
  let job: JobView | null = null;
  const result = await db.$transaction(
    async (tx) => {
      const current = await tx.submission.findFirst({ where: { siteId: target.siteId, kind: target.kind, status: "accepted" }, select: { id: true } });
      if (current?.id === target.id) throw new AppError("conflict", `submission ${target.id} is already the current ${target.kind} of site ${target.site.code}`);
      if (parsed.expectedCurrentSubmissionId !== undefined && (current?.id ?? null) !== parsed.expectedCurrentSubmissionId) {
        throw new AppError("conflict", `the site's current ${target.kind} changed since the restore was previewed; look again`);
      }
      if (current) await tx.submission.update({ where: { id: current.id }, data: { status: "superseded" } });
      const created = await tx.submission.create({
        data: {
          siteId: target.siteId,
          kind: target.kind,
          fileName: target.fileName,
          sha256: target.sha256,
          rowCount: target.rowCount,
          submittedById: actor.userId,
          status: "accepted",
          supersedesId: current?.id ?? null,
        },
        select: { id: true },
      });
      const copied = await copyRows(tx, target.kind, target.id, created.id);
      if (copied !== target.rowCount) {
        throw new AppError("internal", `submission ${target.id} lists ${target.rowCount} rows but has ${copied}; nothing was restored`);
      }
      await recordAudit(tx, actor, {
        action: "submission.restore",
        entityType: "submission",
        entityId: created.id,
        before: { currentSubmissionId: current?.id ?? null },
        after: { restoredFromId: target.id, siteCode: target.site.code, kind: target.kind, rowCount: copied },
        sha256: target.sha256,
      });
      const hasBroods =
        target.kind === "brood_records" ||
        (target.kind === "site_year_covariates" && (await tx.submission.count({ where: { siteId: target.siteId, kind: "brood_records", status: "accepted" } })) > 0);
      if (hasBroods) job = await enqueueSiteRecompute(tx, { siteId: target.siteId, submissionId: created.id });
      return { submissionId: created.id, restoredFromId: target.id, supersededId: current?.id ?? null, rowCount: copied };
    },
    { timeout: TRANSACTION_TIMEOUT_MS, maxWait: TRANSACTION_MAX_WAIT_MS },
  );
  if (job) wakeServerJobRunner();
  return { ...result, job };
}
