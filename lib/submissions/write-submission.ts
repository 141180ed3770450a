import { AppError, type FieldError } from "../errors/app-error";
import type { Db, DbTransaction } from "../db/client";
import { insertBroodRecords, providerOfClient } from "../db/brood-record-sql";
import type { DatabaseProvider } from "../db/provider";
import { KIND_RULES, type RowsOfKind } from "../ingest/submission-kind-rules";
import { findDuplicateKeys, validateRows } from "../ingest/validate-rows";
import type { SubmissionKindName } from "../ingest/schemas/vocabulary";

/**
 * Rows already checked by their kind's schema (an upload checks them on a first pass over the
 * file), handed to the writer in batches so a large file never sits in memory whole.
 */
export interface ValidatedRowStream<K extends SubmissionKindName = SubmissionKindName> {
  /**
   * How many rows the stream will give (the write is abandoned if it gives another number), or
   * null when they are counted as they are written (a file checked while it is written).
   */
  rowCount: number | null;
  /** Calls `insert` with each batch of rows in order; throwing abandons the whole write. */
  stream: (insert: (rows: readonly RowsOfKind[K][]) => Promise<void>) => Promise<void>;
}

export interface WriteSubmissionInput {
  siteCode: string;
  kind: SubmissionKindName;
  fileName: string;
  /** SHA-256 of the uploaded bytes, lower-case hex. */
  sha256: string;
  /** Rows as parsed from the file, validated here by the schema of `kind`; or rows already validated, streamed. */
  rows: readonly unknown[] | ValidatedRowStream;
  submittedById?: number | null;
  /**
   * Write a new submission even when the bytes equal the current one's: the same file read
   * differently (another column mapping or date convention) gives other rows.
   */
  storeSameBytes?: boolean;
  /** Refuse with `conflict` unless the site's current submission of this kind is still this one (null: none). */
  expectedCurrentId?: number | null;
  /**
   * More writes that belong with this submission (audit entry, remembered mapping, queued job),
   * made in its transaction so they happen together or not at all. Not called when unchanged.
   */
  alsoInTransaction?: (tx: DbTransaction, written: { siteId: number; submissionId: number; supersededId: number | null }) => Promise<void>;
}

export interface WriteSubmissionResult {
  submissionId: number;
  /** The submission this one replaced as the site's current one of its kind, if any. */
  supersededId: number | null;
  /** True when the bytes equal the site's current submission of this kind: nothing was written. */
  unchanged: boolean;
  rowCount: number;
}

/** Rows per ORM insert: keeps every statement under SQLite's bound-parameter limit. */
const CHUNK_ROWS = 2_000;
/** A large file takes a while to insert; the transaction must not time out under it. */
export const TRANSACTION_TIMEOUT_MS = 10 * 60_000;
export const TRANSACTION_MAX_WAIT_MS = 60_000;

function validate(input: WriteSubmissionInput & { rows: readonly unknown[] }): ValidatedRowStream {
  const file = input.fileName;
  const rules = KIND_RULES[input.kind];
  const result = validateRows(rules.schema, input.rows, file);
  const errors: FieldError[] = [
    ...result.errors,
    ...findDuplicateKeys(result, rules.keyOf as (row: unknown) => string, rules.describeDuplicate as (row: unknown, first: number) => string, rules.duplicateField, file),
  ];
  if (input.rows.length === 0) errors.push({ field: "(file)", message: "the file has no data rows", file });
  if (errors.length) {
    const rowsWithErrors = new Set(errors.map((e) => e.row).filter((r) => r !== undefined)).size;
    throw new AppError(
      "invalid_input",
      `${file}: ${errors.length} problem${errors.length === 1 ? "" : "s"} in ${rowsWithErrors} row${rowsWithErrors === 1 ? "" : "s"}; nothing was written`,
      errors,
    );
  }
  const rows = result.rows;
  return { rowCount: rows.length, stream: (insert) => insert(rows as never) };
}

async function insertBatch(
  tx: DbTransaction,
  provider: DatabaseProvider,
  kind: SubmissionKindName,
  siteId: number,
  submissionId: number,
  rows: readonly unknown[],
): Promise<void> {
  if (kind === "brood_records") {
    await insertBroodRecords(tx, provider, { siteId, submissionId }, rows as readonly RowsOfKind["brood_records"][]);
    return;
  }
  for (let start = 0; start < rows.length; start += CHUNK_ROWS) {
    const chunk = rows.slice(start, start + CHUNK_ROWS);
    if (kind === "site_year_covariates") {
      await tx.siteYear.createMany({ data: (chunk as RowsOfKind["site_year_covariates"][]).map((r) => ({ ...r, siteId, submissionId })) });
    } else {
      await tx.estimate.createMany({
        data: (chunk as RowsOfKind["estimates"][]).map((r) => ({ ...r, siteId, submissionId, source: "uploaded" as const })),
      });
    }
  }
}

/**
 * Validates a submission's rows and writes the submission with all its rows in one transaction,
 * or writes nothing. The new submission supersedes the site's current one of the same kind,
 * which is kept (status superseded) so it can be restored. Identical bytes to the current
 * submission are recognised and not stored again (unless `storeSameBytes`).
 *
 * Rows given as an array are validated here; a ValidatedRowStream was validated by its maker
 * and is streamed into the transaction in batches.
 *
 * Throws AppError invalid_input listing every bad row (row, field, value, reason), not_found
 * for an unknown site code, and conflict when `expectedCurrentId` no longer holds.
 */
export async function writeSubmission(db: Db, input: WriteSubmissionInput): Promise<WriteSubmissionResult> {
  if (!/^[0-9a-f]{64}$/.test(input.sha256)) {
    throw new AppError("invalid_input", "sha256 must be 64 lower-case hex digits", [{ field: "sha256", message: "must be 64 lower-case hex digits", file: input.fileName }]);
  }
  const validated = Array.isArray(input.rows) ? validate({ ...input, rows: input.rows }) : (input.rows as ValidatedRowStream);
  const site = await db.site.findUnique({ where: { code: input.siteCode }, select: { id: true } });
  if (!site) {
    throw new AppError("not_found", `site code ${input.siteCode} is not in this network`, [
      { field: "site", message: `site code ${input.siteCode} is not in this network`, file: input.fileName },
    ]);
  }
  const provider = providerOfClient(db);
  return db.$transaction(
    async (tx) => {
      const current = await tx.submission.findFirst({
        where: { siteId: site.id, kind: input.kind, status: "accepted" },
        select: { id: true, sha256: true, rowCount: true },
      });
      if (input.expectedCurrentId !== undefined && (current?.id ?? null) !== input.expectedCurrentId) {
        throw new AppError(
          "conflict",
          `the site's current ${input.kind} changed since this upload was checked (now ${current ? `submission ${current.id}` : "none"}); check the file again`,
        );
      }
      if (current && current.sha256 === input.sha256 && !input.storeSameBytes) {
        return { submissionId: current.id, supersededId: null, unchanged: true, rowCount: current.rowCount };
      }
      if (current) await tx.submission.update({ where: { id: current.id }, data: { status: "superseded" } });
      const created = await tx.submission.create({
        data: {
          siteId: site.id,
          kind: input.kind,
          fileName: input.fileName,
          sha256: input.sha256,
          rowCount: validated.rowCount ?? 0,
          submittedById: input.submittedById ?? null,
          status: "accepted",
          supersedesId: current?.id ?? null,
        },
        select: { id: true },
      });
      // One batch is written while the next is read and checked: on PostgreSQL the server inserts
      // while this process parses, so a large file takes about the longer of the two, not their sum.
      let written = 0;
      const pipeline: { inFlight: Promise<void> | null } = { inFlight: null };
      try {
        await validated.stream(async (rows) => {
          if (pipeline.inFlight) await pipeline.inFlight;
          written += rows.length;
          pipeline.inFlight = insertBatch(tx, provider, input.kind, site.id, created.id, rows);
          // Awaited before the next batch or below; until then a failure must not count as unhandled.
          pipeline.inFlight.catch(() => undefined);
        });
      } catch (error) {
        // Let the statement under way finish before the transaction is rolled back.
        await pipeline.inFlight?.catch(() => undefined);
        throw error;
      }
      await pipeline.inFlight;
      if (validated.rowCount === null) {
        await tx.submission.update({ where: { id: created.id }, data: { rowCount: written } });
      } else if (written !== validated.rowCount) {
        throw new AppError("conflict", `${input.fileName}: the file gave ${written} rows on writing, ${validated.rowCount} when checked; nothing was written`);
      }
      await input.alsoInTransaction?.(tx, { siteId: site.id, submissionId: created.id, supersededId: current?.id ?? null });
      return { submissionId: created.id, supersededId: current?.id ?? null, unchanged: false, rowCount: written };
    },
    { timeout: TRANSACTION_TIMEOUT_MS, maxWait: TRANSACTION_MAX_WAIT_MS },
  );
}
