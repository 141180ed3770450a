import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import pg from "pg";
import { createDb, type Db } from "@/lib/db/client";
import { migrateDatabase } from "@/lib/db/migrate";
import type { DatabaseProvider } from "@/lib/db/provider";

/**
 * Throwaway databases for tests. SQLite always; PostgreSQL when a server answers at
 * PHENOPOOL_TEST_PG_URL (default postgresql://postgres@127.0.0.1:5432/postgres).
 * Under CI (CI=true) an unreachable PostgreSQL is a failure, not a skip.
 */
export const TEST_PG_ADMIN_URL = process.env.PHENOPOOL_TEST_PG_URL ?? "postgresql://postgres@127.0.0.1:5432/postgres";

export interface TestDatabase {
  provider: DatabaseProvider;
  url: string;
  db: Db;
  /** Disconnects and deletes the database. */
  drop: () => Promise<void>;
}

let pgReachable: Promise<boolean> | undefined;

/** Whether the PostgreSQL test server answers; throws under CI when it does not. */
export function postgresAvailable(): Promise<boolean> {
  pgReachable ??= (async () => {
    const client = new pg.Client({ connectionString: TEST_PG_ADMIN_URL, connectionTimeoutMillis: 3000 });
    try {
      await client.connect();
      await client.end();
      return true;
    } catch (error) {
      if (process.env.CI === "true") {
        throw new Error(`PostgreSQL at ${TEST_PG_ADMIN_URL} is unreachable under CI: ${(error as Error).message}`);
      }
      return false;
    }
  })();
  return pgReachable;
}

function withDatabase(adminUrl: string, name: string): string {
  const url = new URL(adminUrl);
  url.pathname = `/${name}`;
  return url.toString();
}

/** An empty, unmigrated database of the given kind. */
export async function createEmptyDatabase(provider: DatabaseProvider): Promise<{ url: string; dropRaw: () => Promise<void> }> {
  const suffix = `${process.pid}_${Date.now()}_${Math.floor(Math.random() * 1e9)}`;
  if (provider === "sqlite") {
    const dir = mkdtempSync(join(tmpdir(), "phenopool-test-"));
    return { url: `file:${join(dir, "test.db")}`, dropRaw: async () => rmSync(dir, { recursive: true, force: true }) };
  }
  const name = `phenopool_test_${suffix}`;
  const admin = new pg.Client({ connectionString: TEST_PG_ADMIN_URL });
  await admin.connect();
  await admin.query(`CREATE DATABASE "${name}"`);
  await admin.end();
  return {
    url: withDatabase(TEST_PG_ADMIN_URL, name),
    dropRaw: async () => {
      const cleanup = new pg.Client({ connectionString: TEST_PG_ADMIN_URL });
      await cleanup.connect();
      await cleanup.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`);
      await cleanup.end();
    },
  };
}

/** A migrated, empty database with a connected client. */
export async function createTestDatabase(provider: DatabaseProvider): Promise<TestDatabase> {
  const { url, dropRaw } = await createEmptyDatabase(provider);
  await migrateDatabase(url);
  const db = createDb(url);
  return {
    provider,
    url,
    db,
    drop: async () => {
      await db.$disconnect();
      await dropRaw();
    },
  };
}

/**
 * The providers a database suite should run on: always SQLite, PostgreSQL when reachable.
 * Use with describe.each(await testProviders()).
 */
export async function testProviders(): Promise<DatabaseProvider[]> {
  return (await postgresAvailable()) ? ["sqlite", "postgresql"] : ["sqlite"];
}
