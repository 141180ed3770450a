import type { Actor } from "../auth/actor";
import { recordAudit } from "../audit/record-audit";
import type { Db } from "../db/client";
import { AppError } from "../errors/app-error";
import type { UploadSource } from "../ingest/upload-source";
import { enqueueSiteRecompute } from "../jobs/recompute-site-estimates-job";
import { wakeServerJobRunner } from "../jobs/server-job-runner";
import type { JobView } from "../jobs/job-queue";
import { checkUpload } from "./check-upload";
import { rememberMapping } from "./column-mapping-store";
import { scanUpload, type UploadLimits } from "./scan-upload";
import type { SubmissionDiff } from "./submission-diff";
import { uploadProblemsError } from "./upload-problems-error";
import { acceptUploadRequestSchema, loadUploadTarget, parseUploadRequest, uploadLimitsFromEnv, type AcceptUploadRequest } from "./upload-request";
import { writeSubmission, type ValidatedRowStream } from "./write-submission";

export interface AcceptUploadResult {
  submissionId: number;
  /** The submission this one superseded, if any. */
  supersededId: number | null;
  /** Same bytes as the current submission and no row changed: nothing was written. */
  unchanged: boolean;
  rowCount: number;
  sha256: string;
  diff: SubmissionDiff;
  /** The queued recomputation of the site's estimates (brood records, or site-years of a site with brood records). */
  job: JobView | null;
}

/**
 * Accepts an uploaded file whole or not at all. The file is read twice: first to check every row
 * and build the diff (nothing is written when any problem is found: AppError invalid_input with
 * every listed problem, or too_large), then inside one transaction to write its rows in batches,
 * with the superseding of the site's current version, the remembered column mapping, an audit
 * entry and, for brood records, the queued recomputation of the site's estimates.
 *
 * `request` is validated with acceptUploadRequestSchema. Throws not_found for an unknown site and
 * conflict when the bytes differ from `expectedSha256`, the current submission is no longer
 * `expectedCurrentSubmissionId`, or the file changed between the two readings.
 */
export async function acceptUpload(
  db: Db,
  source: UploadSource,
  request: AcceptUploadRequest,
  actor: Actor,
  limits: UploadLimits = uploadLimitsFromEnv(),
): Promise<AcceptUploadResult> {
  const parsed = parseUploadRequest(acceptUploadRequestSchema, request);
  const target = await loadUploadTarget(db, parsed, limits);
  if (parsed.expectedCurrentSubmissionId !== undefined && (target.current?.id ?? null) !== parsed.expectedCurrentSubmissionId) {
    throw new AppError("conflict", `the site's current ${parsed.kind} changed since the preview; check the file again`);
  }
  const check = await checkUpload(db, source, target, 0);
  const { scan } = check;
  if (scan.totals.problems > 0 || !check.diff || !scan.sha256) throw uploadProblemsError(scan);
  const sha256 = scan.sha256;
  if (parsed.expectedSha256 && parsed.expectedSha256 !== sha256) {
    throw new AppError("conflict", `${source.fileName} is not the file that was previewed (its SHA-256 differs)`);
  }
  if (check.unchanged && target.current) {
    return { submissionId: target.current.id, supersededId: null, unchanged: true, rowCount: target.current.rowCount, sha256, diff: check.diff, job: null };
  }
  const mapping = scan.proposal!.mapping;
  const rows: ValidatedRowStream = {
    rowCount: scan.validRowCount,
    stream: async (insert) => {
      const again = await scanUpload(source, { ...target.settings, duplicatesAlreadyExcluded: true }, (batch) => insert(batch));
      if (again.totals.problems > 0 || again.sha256 !== sha256) {
        throw new AppError("conflict", `${source.fileName} changed while it was being written; nothing was written`);
      }
    },
  };
  let job: JobView | null = null;
  const written = await writeSubmission(db, {
    siteCode: target.site.code,
    kind: parsed.kind,
    fileName: source.fileName,
    sha256,
    rows,
    submittedById: actor.userId,
    storeSameBytes: true,
    expectedCurrentId: target.current?.id ?? null,
    alsoInTransaction: async (tx, { siteId, submissionId, supersededId }) => {
      await rememberMapping(tx, siteId, parsed.kind, mapping);
      await recordAudit(
        tx,
        actor,
        {
          action: "submission.upload",
          entityType: "submission",
          entityId: submissionId,
          before: supersededId === null ? null : { currentSubmissionId: supersededId },
          after: {
            siteCode: target.site.code,
            kind: parsed.kind,
            fileName: source.fileName,
            rowCount: scan.validRowCount,
            diff: { added: check.diff!.added, changed: check.diff!.changed, removed: check.diff!.removed },
          },
          sha256,
        },
      );
      const hasBroods = parsed.kind === "brood_records" || (parsed.kind === "site_year_covariates" && (await tx.submission.count({ where: { siteId, kind: "brood_records", status: "accepted" } })) > 0);
      if (hasBroods) job = await enqueueSiteRecompute(tx, { siteId, submissionId });
    },
  });
  if (job) wakeServerJobRunner();
  return { submissionId: written.submissionId, supersededId: written.supersededId, unchanged: written.unchanged, rowCount: written.rowCount, sha256, diff: check.diff, job };
}
