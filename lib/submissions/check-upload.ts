import type { Db } from "../db/client";
import { KIND_RULES, type KindRules } from "../ingest/submission-kind-rules";
import type { UploadSource } from "../ingest/upload-source";
import { scanUpload, type UploadScan } from "./scan-upload";
import { isEmptyDiff, loadStoredSnapshots, SubmissionDiffBuilder, type SubmissionDiff } from "./submission-diff";
import type { UploadTarget } from "./upload-request";

export interface PreviewRow {
  /** Data row of the file (1 = the first after the headings). */
  row: number;
  /** The row as PhenoPool will store it (dates as days of year from 1 January). */
  values: Record<string, unknown>;
}

export interface UploadCheck {
  scan: UploadScan;
  /** Against the site's current submission of the kind; null when the file has problems. */
  diff: SubmissionDiff | null;
  previewRows: PreviewRow[];
  /** Same bytes as the current submission and no row would change: accepting writes nothing. */
  unchanged: boolean;
}

/** Rows shown in a preview by default. */
export const PREVIEW_ROWS = 20;

/**
 * The first pass over an upload: every problem, the first rows as they will be stored, and the
 * diff against the site's current version of the kind. Writes nothing.
 */
export async function checkUpload(db: Db, source: UploadSource, target: UploadTarget, previewRowCount = PREVIEW_ROWS): Promise<UploadCheck> {
  const rules = KIND_RULES[target.settings.kind] as KindRules<unknown>;
  const stored = await loadStoredSnapshots(db, target.settings.kind, target.current?.id ?? null);
  const diffBuilder = new SubmissionDiffBuilder(rules, stored, target.current?.id ?? null);
  const previewRows: PreviewRow[] = [];
  const scan = await scanUpload(source, target.settings, (rows, rowNumbers) => {
    rows.forEach((row, i) => {
      diffBuilder.add(row);
      if (previewRows.length < previewRowCount) previewRows.push({ row: rowNumbers[i]!, values: { ...(row as Record<string, unknown>) } });
    });
  });
  const diff = scan.totals.problems === 0 ? diffBuilder.finish() : null;
  const unchanged = diff !== null && target.current !== null && target.current.sha256 === scan.sha256 && isEmptyDiff(diff);
  return { scan, diff, previewRows, unchanged };
}
