import { AppError, type FieldError } from "../errors/app-error";
import type { Db, DbTransaction } from "../db/client";
import { broodRecordRowSchema, type BroodRecordRow } from "../ingest/schemas/brood-record-row";
import { siteYearRowSchema, type SiteYearRow } from "../ingest/schemas/site-year-row";
import { estimateRowSchema, type EstimateRow } from "../ingest/schemas/estimate-row";
import { findDuplicateKeys, validateRows } from "../ingest/validate-rows";
import type { SubmissionKindName } from "../ingest/schemas/vocabulary";

export interface WriteSubmissionInput {
  siteCode: string;
  kind: SubmissionKindName;
  fileName: string;
  /** SHA-256 of the uploaded bytes, lower-case hex. */
  sha256: string;
  /** Rows as parsed from the file, validated here by the schema of `kind`. */
  rows: readonly unknown[];
  submittedById?: number | null;
}

export interface WriteSubmissionResult {
  submissionId: number;
  /** The submission this one replaced as the site's current one of its kind, if any. */
  supersededId: number | null;
  /** True when the bytes equal the site's current submission of this kind: nothing was written. */
  unchanged: boolean;
  rowCount: number;
}

/** Rows per INSERT: keeps every statement under SQLite's bound-parameter limit. */
const CHUNK_ROWS = 2_000;
/** A large file takes a while to insert; the transaction must not time out under it. */
const TRANSACTION_TIMEOUT_MS = 10 * 60_000;

type ValidatedRows =
  | { kind: "brood_records"; rows: BroodRecordRow[] }
  | { kind: "site_year_covariates"; rows: SiteYearRow[] }
  | { kind: "estimates"; rows: EstimateRow[] };

function validate(input: WriteSubmissionInput): ValidatedRows {
  const file = input.fileName;
  let errors: FieldError[];
  let validated: ValidatedRows;
  if (input.kind === "brood_records") {
    const result = validateRows(broodRecordRowSchema, input.rows, file);
    errors = [
      ...result.errors,
      ...findDuplicateKeys(
        result,
        (r) => `${r.year}\u0000${r.femaleId}`,
        (r, first) => `female ${r.femaleId} has two broods in ${r.year} (first at row ${first})`,
        "femaleId",
        file,
      ),
    ];
    validated = { kind: input.kind, rows: result.rows };
  } else if (input.kind === "site_year_covariates") {
    const result = validateRows(siteYearRowSchema, input.rows, file);
    errors = [
      ...result.errors,
      ...findDuplicateKeys(result, (r) => String(r.year), (r, first) => `year ${r.year} appears twice (first at row ${first})`, "year", file),
    ];
    validated = { kind: input.kind, rows: result.rows };
  } else {
    const result = validateRows(estimateRowSchema, input.rows, file);
    errors = [
      ...result.errors,
      ...findDuplicateKeys(
        result,
        (r) => [r.outcome, r.level, r.term, r.year ?? "site"].join("\u0000"),
        (r, first) => `estimate ${r.outcome} ${r.level} ${r.term} for ${r.year ?? "the whole site"} appears twice (first at row ${first})`,
        "outcome",
        file,
      ),
    ];
    validated = { kind: input.kind, rows: result.rows };
  }
  if (input.rows.length === 0) errors.push({ field: "(file)", message: "the file has no data rows", file });
  if (!/^[0-9a-f]{64}$/.test(input.sha256)) errors.push({ field: "sha256", message: "must be 64 lower-case hex digits", file });
  if (errors.length) {
    const rowsWithErrors = new Set(errors.map((e) => e.row).filter((r) => r !== undefined)).size;
    throw new AppError(
      "invalid_input",
      `${file}: ${errors.length} problem${errors.length === 1 ? "" : "s"} in ${rowsWithErrors} row${rowsWithErrors === 1 ? "" : "s"}; nothing was written`,
      errors,
    );
  }
  return validated;
}

async function insertRows(tx: DbTransaction, siteId: number, submissionId: number, validated: ValidatedRows): Promise<void> {
  for (let start = 0; start < validated.rows.length; start += CHUNK_ROWS) {
    if (validated.kind === "brood_records") {
      await tx.broodRecord.createMany({
        data: validated.rows.slice(start, start + CHUNK_ROWS).map((r) => ({ ...r, siteId, submissionId })),
      });
    } else if (validated.kind === "site_year_covariates") {
      await tx.siteYear.createMany({
        data: validated.rows.slice(start, start + CHUNK_ROWS).map((r) => ({ ...r, siteId, submissionId })),
      });
    } else {
      await tx.estimate.createMany({
        data: validated.rows.slice(start, start + CHUNK_ROWS).map((r) => ({ ...r, siteId, submissionId, source: "uploaded" as const })),
      });
    }
  }
}

/**
 * Validates a submission's rows and writes the submission with all its rows in one transaction,
 * or writes nothing. The new submission supersedes the site's current one of the same kind,
 * which is kept (status superseded) so it can be restored. Identical bytes to the current
 * submission are recognised and not stored again.
 *
 * Throws AppError invalid_input listing every bad row (row, field, value, reason), and
 * not_found for an unknown site code.
 */
export async function writeSubmission(db: Db, input: WriteSubmissionInput): Promise<WriteSubmissionResult> {
  const validated = validate(input);
  const site = await db.site.findUnique({ where: { code: input.siteCode }, select: { id: true } });
  if (!site) {
    throw new AppError("not_found", `site code ${input.siteCode} is not in this network`, [
      { field: "site", message: `site code ${input.siteCode} is not in this network`, file: input.fileName },
    ]);
  }
  return db.$transaction(
    async (tx) => {
      const current = await tx.submission.findFirst({
        where: { siteId: site.id, kind: input.kind, status: "accepted" },
        select: { id: true, sha256: true, rowCount: true },
      });
      if (current && current.sha256 === input.sha256) {
        return { submissionId: current.id, supersededId: null, unchanged: true, rowCount: current.rowCount };
      }
      if (current) await tx.submission.update({ where: { id: current.id }, data: { status: "superseded" } });
      const created = await tx.submission.create({
        data: {
          siteId: site.id,
          kind: input.kind,
          fileName: input.fileName,
          sha256: input.sha256,
          rowCount: validated.rows.length,
          submittedById: input.submittedById ?? null,
          status: "accepted",
          supersedesId: current?.id ?? null,
        },
        select: { id: true },
      });
      await insertRows(tx, site.id, created.id, validated);
      return { submissionId: created.id, supersededId: current?.id ?? null, unchanged: false, rowCount: validated.rows.length };
    },
    { timeout: TRANSACTION_TIMEOUT_MS, maxWait: 60_000 },
  );
}
