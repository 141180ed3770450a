import { AppError } from "../errors/app-error";
import { toFieldError } from "../ingest/upload-problem";
import type { UploadScan } from "./scan-upload";

/**
 * The AppError for an upload that cannot be accepted: too_large for a size limit, otherwise
 * invalid_input, with the totals in the message and every listed problem as a field error.
 */
export function uploadProblemsError(scan: UploadScan): AppError {
  const { totals } = scan;
  const listed = totals.truncated ? ` (the first ${scan.problems.length} listed)` : "";
  const rows = totals.rowsWithProblems ? ` in ${totals.rowsWithProblems} row${totals.rowsWithProblems === 1 ? "" : "s"}` : "";
  const message = `${scan.fileName}: ${totals.problems} problem${totals.problems === 1 ? "" : "s"}${rows}${listed}; nothing was written`;
  return new AppError(scan.tooLarge ? "too_large" : "invalid_input", message, scan.problems.map(toFieldError));
}
