import type { Db, DbTransaction } from "./client";
import type { BroodRecord } from "./generated/sqlite/client";
import type { DatabaseProvider } from "./provider";

/**
 * Which database a client talks to. Both clients share one type and the client object is an
 * extension proxy (instanceof cannot tell them apart), so this reads the provider the client
 * was generated for.
 */
export function providerOfClient(db: Db): DatabaseProvider {
  const provider = (db as unknown as { _activeProvider?: string })._activeProvider;
  if (provider === "postgresql" || provider === "sqlite") return provider;
  throw new Error(`unknown database provider ${String(provider)}`);
}

/** A brood record's own values, as checked from a file (the site and submission are the batch's). */
export type BroodRecordValues = Omit<BroodRecord, "id" | "siteId" | "submissionId">;

const BROOD_COLUMNS = ["siteId", "year", "femaleId", "layDateDoy", "clutchSize", "hatchDateDoy", "fledglings", "recruits", "submissionId"] as const;
const COLUMN_LIST = BROOD_COLUMNS.map((c) => `"${c}"`).join(", ");
/** Rows per statement: each statement binds one JSON text of this many rows. */
const ROWS_PER_STATEMENT = 20_000;

/**
 * Inserts brood records of one site and submission inside the caller's transaction, each batch as
 * one statement that binds a single JSON array of rows and lets the database unpack it (json_each
 * on SQLite, json_array_elements on PostgreSQL): a million rows take seconds, where one ORM call
 * per chunk takes minutes and thousands of bound parameters per statement take several times
 * longer. The JSON texts are made before the first statement is sent, so the row objects can be
 * freed while the database works.
 */
export async function insertBroodRecords(tx: DbTransaction, provider: DatabaseProvider, owner: { siteId: number; submissionId: number }, rows: readonly BroodRecordValues[]): Promise<void> {
  const { siteId, submissionId } = owner;
  const texts: string[] = [];
  for (let start = 0; start < rows.length; start += ROWS_PER_STATEMENT) {
    const end = Math.min(rows.length, start + ROWS_PER_STATEMENT);
    const values: unknown[] = new Array(end - start);
    for (let i = start; i < end; i++) {
      const r = rows[i]!;
      values[i - start] = [siteId, r.year, r.femaleId, r.layDateDoy, r.clutchSize, r.hatchDateDoy, r.fledglings, r.recruits, submissionId];
    }
    texts.push(JSON.stringify(values));
  }
  const select =
    provider === "postgresql"
      ? `SELECT (e->>0)::int, (e->>1)::int, e->>2, (e->>3)::int, (e->>4)::int, (e->>5)::int, (e->>6)::int, (e->>7)::int, (e->>8)::int FROM json_array_elements($1::json) AS e`
      : `SELECT e.value ->> 0, e.value ->> 1, e.value ->> 2, e.value ->> 3, e.value ->> 4, e.value ->> 5, e.value ->> 6, e.value ->> 7, e.value ->> 8 FROM json_each(?) AS e`;
  for (const json of texts) await tx.$executeRawUnsafe(`INSERT INTO "BroodRecord" (${COLUMN_LIST}) ${select}`, json);
}

/**
 * Copies every brood record of one submission to another (a restored version) in one statement.
 */
export async function copyBroodRecords(tx: DbTransaction, fromSubmissionId: number, toSubmissionId: number): Promise<number> {
  const others = BROOD_COLUMNS.filter((c) => c !== "submissionId")
    .map((c) => `"${c}"`)
    .join(", ");
  return tx.$executeRawUnsafe(
    `INSERT INTO "BroodRecord" (${others}, "submissionId") SELECT ${others}, ${Number(toSubmissionId)} FROM "BroodRecord" WHERE "submissionId" = ${Number(fromSubmissionId)} ORDER BY "id"`,
  );
}

/** Rows read per query by readBroodRecordSnapshots. */
const SNAPSHOT_PAGE_ROWS = 50_000;

/**
 * Reads a submission's brood records as (natural key, snapshot) strings, page by page in id
 * order, with the strings built by the database: a million rows read in a few seconds with two
 * short text values each. The key is year, U+001F, female id; the snapshot is the JSON array of
 * lay date, clutch size, hatch date (null when empty), fledglings and recruits. These must stay
 * the strings BROOD_RECORD_RULES.keyOf and rowSnapshot make from a row (a test holds them equal).
 */
export async function readBroodRecordSnapshots(
  db: Db,
  submissionId: number,
  onPage: (page: { key: string; snapshot: string }[]) => void,
): Promise<void> {
  const provider = providerOfClient(db);
  const text = (column: string) => (provider === "postgresql" ? `"${column}"::text` : `CAST("${column}" AS TEXT)`);
  const separator = provider === "postgresql" ? "chr(31)" : "char(31)";
  const snapshot = [
    "'['",
    text("layDateDoy"),
    "','",
    text("clutchSize"),
    "','",
    `COALESCE(${text("hatchDateDoy")}, 'null')`,
    "','",
    text("fledglings"),
    "','",
    text("recruits"),
    "']'",
  ].join(" || ");
  const fetchPage = (after: number) =>
    db.$queryRawUnsafe<{ id: number | bigint; k: string; v: string }[]>(
      `SELECT "id", ${text("year")} || ${separator} || "femaleId" AS k, ${snapshot} AS v FROM "BroodRecord" ` +
        `WHERE "submissionId" = ${Number(submissionId)} AND "id" > ${after} ORDER BY "id" LIMIT ${SNAPSHOT_PAGE_ROWS}`,
    );
  // The next page is asked for before this one is handed on, so the database reads while we index.
  for (let pending = fetchPage(0); ; ) {
    const page = await pending;
    const full = page.length === SNAPSHOT_PAGE_ROWS;
    if (full) pending = fetchPage(Number(page[page.length - 1]!.id));
    try {
      onPage(page.map((row) => ({ key: row.k, snapshot: row.v })));
    } catch (error) {
      if (full) await pending.catch(() => undefined);
      throw error;
    }
    if (!full) return;
  }
}
