import type { Db } from "../db/client";
import type { ProposedMapping } from "../ingest/column-mapping";
import type { TableInfo } from "../ingest/read-upload-table";
import type { SubmissionKindName } from "../ingest/schemas/vocabulary";
import { UPLOAD_FIELDS, type UploadField } from "../ingest/upload-fields";
import type { ProblemTotals, UploadProblem } from "../ingest/upload-problem";
import type { UploadSource } from "../ingest/upload-source";
import { unreadColumnWarnings, type UploadWarning } from "../ingest/unread-columns";
import { checkUpload, type PreviewRow } from "./check-upload";
import type { SubmissionDiff } from "./submission-diff";
import { loadUploadTarget, parseUploadRequest, uploadLimitsFromEnv, uploadRequestSchema, type UploadRequest } from "./upload-request";
import type { UploadLimits } from "./scan-upload";

type SubmissionStatusName = NonNullable<Awaited<ReturnType<Db["submission"]["findFirst"]>>>["status"];

export interface SameBytesSubmission {
  submissionId: number;
  status: SubmissionStatusName;
  submittedAt: Date;
  fileName: string;
}

/** Everything the upload page shows before the user accepts a file. */
export interface UploadPreview {
  fileName: string;
  siteCode: string;
  kind: SubmissionKindName;
  /** How the site writes day numbers; ISO dates are read as they are. */
  dateConvention: "jan1" | "apr1";
  sha256: string | null;
  byteCount: number;
  /** Format, delimiter (and whether it was detected), byte-order mark, sheet; null when unreadable. */
  table: TableInfo | null;
  headings: string[];
  /** The fields of this kind, for mapping headings to them. */
  fields: readonly UploadField[];
  /** Which heading feeds which field and where that came from; null without headings. */
  mapping: ProposedMapping | null;
  /** The file's headings no field reads: their columns will not be stored unless mapped. */
  unusedHeadings: string[];
  /** Columns that will not be read (unmapped headings, values under an empty heading), in words. */
  warnings: UploadWarning[];
  /** Data records in the file, and rows that passed every check. */
  recordCount: number;
  rowCount: number;
  problems: UploadProblem[];
  totals: ProblemTotals;
  tooLarge: boolean;
  /** True when accepting would write the file (no problems). */
  acceptable: boolean;
  previewRows: PreviewRow[];
  /** What accepting would change; null while the file has problems. */
  diff: SubmissionDiff | null;
  currentSubmissionId: number | null;
  /** Earlier submissions of this site and kind with the very same bytes. */
  sameBytes: SameBytesSubmission[];
  /** Same bytes as the current submission and no change: accepting writes nothing. */
  unchanged: boolean;
}

/**
 * Reads and checks an upload without writing anything: the problems (every one counted, the
 * first `limits.maxListedProblems` listed), the first rows as they will be stored, the mapping
 * proposed for the headings with the columns no field reads, and the diff against the site's
 * current submission of the kind.
 *
 * `request` is validated with uploadRequestSchema (throws invalid_input); an unknown site
 * throws not_found. Problems with the file are returned, never thrown.
 */
export async function previewUpload(db: Db, source: UploadSource, request: UploadRequest, limits: UploadLimits = uploadLimitsFromEnv()): Promise<UploadPreview> {
  const parsed = parseUploadRequest(uploadRequestSchema, request);
  const target = await loadUploadTarget(db, parsed, limits);
  const check = await checkUpload(db, source, target);
  const { scan } = check;
  const sameBytes = scan.sha256
    ? await db.submission.findMany({
        where: { siteId: target.site.id, kind: parsed.kind, sha256: scan.sha256 },
        select: { id: true, status: true, submittedAt: true, fileName: true },
        orderBy: { id: "asc" },
      })
    : [];
  return {
    fileName: source.fileName,
    siteCode: target.site.code,
    kind: parsed.kind,
    dateConvention: target.site.dateConvention,
    sha256: scan.sha256,
    byteCount: scan.byteCount,
    table: scan.table,
    headings: scan.headings,
    fields: UPLOAD_FIELDS[parsed.kind],
    mapping: scan.proposal,
    unusedHeadings: scan.proposal?.unusedHeadings ?? [],
    warnings: unreadColumnWarnings(parsed.kind, scan.proposal, scan.unheadedColumns),
    recordCount: scan.recordCount,
    rowCount: scan.validRowCount,
    problems: scan.problems,
    totals: scan.totals,
    tooLarge: scan.tooLarge,
    acceptable: scan.totals.problems === 0,
    previewRows: check.previewRows,
    diff: check.diff,
    currentSubmissionId: target.current?.id ?? null,
    sameBytes: sameBytes.map((s) => ({ submissionId: s.id, status: s.status, submittedAt: s.submittedAt, fileName: s.fileName })),
    unchanged: check.unchanged,
  };
}
