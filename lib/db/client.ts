import { mkdirSync } from "node:fs";
import { dirname } from "node:path";
import { PrismaPg } from "@prisma/adapter-pg";
import { PrismaClient as SqliteClient } from "./generated/sqlite/client";
import { PrismaClient as PostgresClient } from "./generated/postgresql/client";
import { readEnv } from "../config/env";
import { providerOf, sqlitePath } from "./provider";
import { SqliteConnections } from "./sqlite-connections";

/**
 * The database client. Both generated clients share one data model, so the PostgreSQL one
 * is typed as the SQLite one: same models, same fields, same enums.
 */
export type Db = SqliteClient;
export type DbTransaction = Parameters<Parameters<Db["$transaction"]>[0]>[0];

/** SQLite waits this long for another process's lock before giving up, so concurrent writers queue. */
export const SQLITE_BUSY_TIMEOUT_MS = 15_000;

/**
 * How long a transaction may wait for its turn (SQLite: the write connection, which a large upload
 * holds while its rows go in; PostgreSQL: a pooled connection) before it fails. Prisma's default of
 * 2 s would turn a busy moment into errors; a write that must wait, waits. A call may ask otherwise.
 */
export const TRANSACTION_START_WAIT_MS = 120_000;

export interface CreateDbOptions {
  /**
   * SQLite: how long a write waits for another process's lock (default SQLITE_BUSY_TIMEOUT_MS).
   * The wait blocks the process, so the web server keeps it short; the background job process,
   * which serves no requests, waits longer rather than fail while the server writes a large upload.
   */
  sqliteBusyTimeoutMs?: number;
}

export function createDb(url: string, options: CreateDbOptions = {}): Db {
  const transactionOptions = { maxWait: TRANSACTION_START_WAIT_MS };
  if (providerOf(url) === "postgresql") {
    return new PostgresClient({ adapter: new PrismaPg({ connectionString: url }), transactionOptions }) as unknown as Db;
  }
  const path = sqlitePath(url);
  if (path !== ":memory:") mkdirSync(dirname(path), { recursive: true });
  // One writing and one reading connection: see sqlite-connections.ts.
  return new SqliteClient({ adapter: new SqliteConnections({ path, busyTimeoutMs: options.sqliteBusyTimeoutMs ?? SQLITE_BUSY_TIMEOUT_MS }), transactionOptions });
}

const cache = globalThis as unknown as { phenopoolDb?: { url: string; db: Db } };

/** The process-wide client for DATABASE_URL, cached on globalThis so hot reload reuses it. */
export function getDb(): Db {
  const { DATABASE_URL } = readEnv();
  if (!cache.phenopoolDb || cache.phenopoolDb.url !== DATABASE_URL) {
    cache.phenopoolDb = { url: DATABASE_URL, db: createDb(DATABASE_URL) };
  }
  return cache.phenopoolDb.db;
}
