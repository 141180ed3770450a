import type { Db, DbTransaction } from "./client";
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

/** A brood record as stored, without its id. */
export interface BroodRecordInsert {
  siteId: number;
  submissionId: number;
  year: number;
  femaleId: string;
  layDateDoy: number;
  clutchSize: number;
  hatchDateDoy: number | null;
  fledglings: number;
  recruits: number;
}

const BROOD_COLUMNS = ["siteId", "year", "femaleId", "layDateDoy", "clutchSize", "hatchDateDoy", "fledglings", "recruits", "submissionId"] as const;
const BROOD_PG_TYPES = ["int", "int", "text", "int", "int", "int", "int", "int", "int"];
const COLUMN_LIST = BROOD_COLUMNS.map((c) => `"${c}"`).join(", ");
/** Rows per statement: SQLite binds at most 32,766 parameters; PostgreSQL takes one array per column. */
const SQLITE_ROWS_PER_STATEMENT = 1_000;
const POSTGRES_ROWS_PER_STATEMENT = 10_000;

/**
 * Inserts brood records with multi-row statements inside the caller's transaction: a million
 * rows take seconds, where one ORM call per chunk takes minutes. Plain SQL on both databases
 * (VALUES lists on SQLite, UNNEST of column arrays on PostgreSQL), every value a bound parameter.
 */
export async function insertBroodRecords(tx: DbTransaction, provider: DatabaseProvider, rows: readonly BroodRecordInsert[]): Promise<void> {
  const perStatement = provider === "postgresql" ? POSTGRES_ROWS_PER_STATEMENT : SQLITE_ROWS_PER_STATEMENT;
  for (let start = 0; start < rows.length; start += perStatement) {
    const chunk = rows.slice(start, start + perStatement);
    if (provider === "postgresql") {
      const columns = BROOD_COLUMNS.map((name) => chunk.map((row) => row[name]));
      const arrays = BROOD_PG_TYPES.map((type, i) => `$${i + 1}::${type}[]`).join(", ");
      await tx.$executeRawUnsafe(`INSERT INTO "BroodRecord" (${COLUMN_LIST}) SELECT * FROM UNNEST(${arrays})`, ...columns);
    } else {
      const values: unknown[] = [];
      for (const row of chunk) for (const name of BROOD_COLUMNS) values.push(row[name]);
      const tuple = `(${BROOD_COLUMNS.map(() => "?").join(",")})`;
      await tx.$executeRawUnsafe(`INSERT INTO "BroodRecord" (${COLUMN_LIST}) VALUES ${chunk.map(() => tuple).join(",")}`, ...values);
    }
  }
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
