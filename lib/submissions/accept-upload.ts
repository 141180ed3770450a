import type { Actor } from "../auth/actor";
import { recordAudit } from "../audit/record-audit";
import type { Db } from "../db/client";
import { AppError } from "../errors/app-error";
import { meteredBytes, UploadFileError, type ByteMeter, type UploadSource } from "../ingest/upload-source";
import { KIND_RULES, type KindRules } from "../ingest/submission-kind-rules";
import type { SubmissionKindName } from "../ingest/schemas/vocabulary";
import { unreadColumnWarnings, type UploadWarning } from "../ingest/unread-columns";
import { enqueueSiteRecompute } from "../jobs/recompute-site-estimates-job";
import { wakeServerJobRunner } from "../jobs/server-job-runner";
import type { JobView } from "../jobs/job-queue";
import { checkUpload } from "./check-upload";
import { rememberMapping } from "./column-mapping-store";
import { scanUpload, type UploadLimits, type UploadScan } from "./scan-upload";
import { loadStoredSnapshots, SubmissionDiffBuilder, type SubmissionDiff } from "./submission-diff";
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
  /** The file's headings no field reads: their columns were not stored. */
  unusedHeadings: string[];
  /** Columns that were not read (unmapped headings, values under an empty heading), in words. */
  warnings: UploadWarning[];
}

/**
 * Accepts an uploaded file whole or not at all, in one transaction that writes its rows in
 * batches with the superseding of the site's current version, the remembered column mapping, an
 * audit entry and, for brood records, the queued recomputation of the site's estimates. The result
 * names the file's columns that were not read (unusedHeadings, warnings).
 *
 * A file is read once: every row is checked, compared with the current version for the diff, and
 * written as it comes; when the end shows any problem (AppError invalid_input with every listed
 * problem, or too_large) the transaction is rolled back and nothing is left. Only a file with the
 * current version's bytes (or over the size limit) is first checked on its own, so that accepting
 * it again writes nothing unless another reading of the same bytes gives other rows.
 *
 * `request` is validated with acceptUploadRequestSchema. Throws not_found for an unknown site and
 * conflict when the bytes differ from `expectedSha256`, the current submission is no longer
 * `expectedCurrentSubmissionId`, or the file changed while it was read.
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
  const notPreviewed = () => new AppError("conflict", `${source.fileName} is not the file that was previewed (its SHA-256 differs)`);
  const sha256 = await sha256Within(source, limits.maxBytes);
  if (sha256 !== null && parsed.expectedSha256 && parsed.expectedSha256 !== sha256) throw notPreviewed();
  const checked: Checked = { scan: null, diff: null };
  let rows: ValidatedRowStream;
  if (sha256 === null || sha256 === target.current?.sha256) {
    // Checked on its own first: too large (reported by the check), or perhaps nothing to write.
    const check = await checkUpload(db, source, target, 0);
    const { scan } = check;
    if (scan.totals.problems > 0 || !check.diff || !scan.sha256) throw uploadProblemsError(scan);
    if (parsed.expectedSha256 && parsed.expectedSha256 !== scan.sha256) throw notPreviewed();
    if (check.unchanged && target.current) {
      return { submissionId: target.current.id, supersededId: null, unchanged: true, rowCount: target.current.rowCount, sha256: scan.sha256, diff: check.diff, job: null, ...unreadColumns(parsed.kind, scan) };
    }
    Object.assign(checked, { scan, diff: check.diff });
    rows = {
      rowCount: scan.validRowCount,
      stream: async (insert) => {
        const again = await scanUpload(source, { ...target.settings, duplicatesAlreadyExcluded: true }, (batch) => insert(batch));
        if (again.totals.problems > 0 || again.sha256 !== scan.sha256) throw changedWhileRead(source);
      },
    };
  } else {
    const diff = new DiffWhileStoredLoads(parsed.kind, loadStoredSnapshots(db, parsed.kind, target.current?.id ?? null), target.current?.id ?? null);
    rows = {
      rowCount: null,
      stream: async (insert) => {
        const scan = await scanUpload(source, target.settings, async (batch) => {
          await diff.add(batch);
          await insert(batch);
        });
        // A file that changed since it was hashed is refused as such, whatever its rows now say.
        if (scan.sha256 !== null && scan.sha256 !== sha256) throw changedWhileRead(source);
        if (scan.totals.problems > 0 || !scan.sha256) throw uploadProblemsError(scan);
        Object.assign(checked, { scan, diff: await diff.finish() });
      },
    };
  }
  let job: JobView | null = null;
  const written = await writeSubmission(db, {
    siteCode: target.site.code,
    kind: parsed.kind,
    fileName: source.fileName,
    sha256: checked.scan?.sha256 ?? sha256!,
    rows,
    submittedById: actor.userId,
    storeSameBytes: true,
    expectedCurrentId: target.current?.id ?? null,
    alsoInTransaction: async (tx, { siteId, submissionId, supersededId }) => {
      const { scan, diff } = checkedOutcome(checked);
      const unusedHeadings = scan.proposal?.unusedHeadings ?? [];
      await rememberMapping(tx, siteId, parsed.kind, scan.proposal!.mapping);
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
            diff: { added: diff.added, changed: diff.changed, removed: diff.removed },
            // Provenance of what the stored rows left out of the file.
            ...(unusedHeadings.length ? { unusedHeadings } : {}),
          },
          sha256: scan.sha256!,
        },
      );
      const hasBroods = parsed.kind === "brood_records" || (parsed.kind === "site_year_covariates" && (await tx.submission.count({ where: { siteId, kind: "brood_records", status: "accepted" } })) > 0);
      if (hasBroods) job = await enqueueSiteRecompute(tx, { siteId, submissionId });
    },
  });
  if (job) wakeServerJobRunner();
  const { scan, diff } = checkedOutcome(checked);
  return { submissionId: written.submissionId, supersededId: written.supersededId, unchanged: written.unchanged, rowCount: written.rowCount, sha256: scan.sha256!, diff, job, ...unreadColumns(parsed.kind, scan) };
}

/**
 * The diff of a file against the site's current version, built while that version's rows are
 * still being read from the database: the file's first rows wait in file order until they are
 * in, so reading the stored version, checking the file and writing it all overlap.
 */
/**
 * Most rows of the file kept waiting for the stored version (a safety bound: beyond it the reading
 * pauses until the stored rows are in). With a 1,000,000-row file over a stored million the whole
 * upload stayed under 1 GB resident (test/bench/upload.bench.ts).
 */
const WAITING_ROWS = 1_000_000;

class DiffWhileStoredLoads {
  private builder: SubmissionDiffBuilder<unknown> | null = null;
  private waiting: unknown[] = [];
  private readonly loaded: Promise<void>;

  constructor(kind: SubmissionKindName, stored: ReturnType<typeof loadStoredSnapshots>, againstSubmissionId: number | null) {
    this.loaded = stored.then((index) => {
      const builder = new SubmissionDiffBuilder(KIND_RULES[kind] as KindRules<unknown>, index, againstSubmissionId);
      for (const row of this.waiting) builder.add(row);
      this.waiting = [];
      this.builder = builder;
    });
    // Awaited in finish(); until then a failure must not count as unhandled.
    this.loaded.catch(() => undefined);
  }

  /** Adds rows in file order; once WAITING_ROWS wait, resolves only when the stored rows are in. */
  async add(rows: readonly unknown[]): Promise<void> {
    if (this.builder) {
      for (const row of rows) this.builder.add(row);
      return;
    }
    for (const row of rows) this.waiting.push(row);
    if (this.waiting.length >= WAITING_ROWS) await this.loaded;
  }

  async finish(): Promise<SubmissionDiff> {
    await this.loaded;
    return this.builder!.finish();
  }
}

/** What reading the file found, filled in by the reading inside the transaction (or before it). */
interface Checked {
  scan: UploadScan | null;
  diff: SubmissionDiff | null;
}

function checkedOutcome(checked: Checked): { scan: UploadScan; diff: SubmissionDiff } {
  if (!checked.scan || !checked.diff) throw new Error("the upload's rows were written before the file had been read to its end");
  return { scan: checked.scan, diff: checked.diff };
}

type UnreadColumns = Pick<AcceptUploadResult, "unusedHeadings" | "warnings">;

function unreadColumns(kind: Parameters<typeof unreadColumnWarnings>[0], scan: UploadScan): UnreadColumns {
  return { unusedHeadings: scan.proposal?.unusedHeadings ?? [], warnings: unreadColumnWarnings(kind, scan.proposal, scan.unheadedColumns) };
}

function changedWhileRead(source: UploadSource): AppError {
  return new AppError("conflict", `${source.fileName} changed while it was being read; nothing was written`);
}

/** The SHA-256 of the source's bytes, or null when there are more than `maxBytes` (the check then reports it). */
async function sha256Within(source: UploadSource, maxBytes: number): Promise<string | null> {
  const meter: ByteMeter = { bytes: 0, sha256: null };
  try {
    for await (const chunk of meteredBytes(source, maxBytes, meter)) void chunk;
  } catch (error) {
    if (error instanceof UploadFileError) return null;
    throw error;
  }
  return meter.sha256;
}
