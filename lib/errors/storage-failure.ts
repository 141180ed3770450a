/**
 * Recognises a write the database could not store because its storage refused it: the disk (or the
 * database's size limit) is full, or the database is read-only. Both are told apart from a bug, in
 * words a network coordinator can act on, and say that nothing was written: every write path
 * writes in one transaction, which the database rolls back when it cannot finish it.
 *
 * Recognised: SQLite result codes SQLITE_FULL and SQLITE_READONLY (and their extended codes), as
 * better-sqlite3 and Prisma's driver adapter report them; PostgreSQL SQLSTATEs 53100 disk_full and
 * 25006 read_only_sql_transaction (PostgreSQL documentation, appendix A, "Error codes"); and the
 * operating system's ENOSPC and EROFS.
 */
export type StorageFailureKind = "full" | "read_only";

export const STORAGE_FAILURE_MESSAGES: Record<StorageFailureKind, string> = {
  full:
    "the database could not store this change because its disk is full (or the database has reached its size limit); nothing was written. " +
    "Free space on the database's disk, then try again.",
  read_only:
    "the database could not store this change because it is read-only (file permissions, a disk mounted read-only, or a read-only server); nothing was written. " +
    "Make the database writable, then try again.",
};

const FULL = /^(SQLITE_FULL|53100|ENOSPC)$/;
const READ_ONLY = /^(SQLITE_READONLY(_\w+)?|25006|EROFS)$/;
const FULL_TEXT = /database or disk is full|no space left on device|could not extend file/i;
const READ_ONLY_TEXT = /attempt to write a readonly database|read-only transaction|read-only file system/i;

/** The codes and messages of an error, its Prisma driver-adapter cause and its cause chain. */
function describe(error: unknown, depth = 0): { codes: string[]; messages: string[] } {
  const codes: string[] = [];
  const messages: string[] = [];
  if (depth > 5 || error === null || typeof error !== "object") return { codes, messages };
  const record = error as { code?: unknown; originalCode?: unknown; message?: unknown; cause?: unknown; meta?: { driverAdapterError?: unknown } };
  for (const code of [record.code, record.originalCode]) if (typeof code === "string") codes.push(code);
  if (typeof record.message === "string") messages.push(record.message);
  for (const inner of [record.cause, record.meta?.driverAdapterError]) {
    const nested = describe(inner, depth + 1);
    codes.push(...nested.codes);
    messages.push(...nested.messages);
  }
  return { codes, messages };
}

/** Which storage failure `error` is, or null when it is something else. */
export function storageFailureOf(error: unknown): StorageFailureKind | null {
  const { codes, messages } = describe(error);
  if (codes.some((c) => FULL.test(c)) || messages.some((m) => FULL_TEXT.test(m))) return "full";
  if (codes.some((c) => READ_ONLY.test(c)) || messages.some((m) => READ_ONLY_TEXT.test(m))) return "read_only";
  return null;
}
