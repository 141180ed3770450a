import { createHash } from "node:crypto";
import { mkdirSync, readdirSync, readFileSync, existsSync } from "node:fs";
import { dirname, join } from "node:path";
import Database from "better-sqlite3";
import pg from "pg";
import { providerOf, sqlitePath, type DatabaseProvider } from "./provider";
import { SQLITE_BUSY_TIMEOUT_MS } from "./client";

/**
 * The project's own migration step (prisma migrate cannot run on these machines).
 * Migrations are folders prisma/migrations/<provider>/<NNNN_name>/migration.sql, applied in
 * name order, each inside one transaction together with its row in the ledger table, so a
 * failed migration leaves the database as it was. An applied migration whose file changed
 * afterwards is an error: history is never rewritten silently.
 */

export const MIGRATION_LEDGER = "_phenopool_migrations";

export interface MigrationFile {
  name: string;
  sql: string;
  checksum: string;
}

export interface MigrationReport {
  provider: DatabaseProvider;
  applied: string[];
  alreadyApplied: string[];
}

export interface MigrateOptions {
  /** Folder holding sqlite/ and postgresql/ migration folders. Default: prisma/migrations under the working directory. */
  migrationsRoot?: string;
}

export function defaultMigrationsRoot(): string {
  return join(/*turbopackIgnore: true*/ process.cwd(), "prisma", "migrations");
}

export function readMigrations(provider: DatabaseProvider, root = defaultMigrationsRoot()): MigrationFile[] {
  const folder = join(root, provider);
  if (!existsSync(folder)) throw new Error(`No migrations folder at ${folder}`);
  return readdirSync(folder, { withFileTypes: true })
    .filter((entry) => entry.isDirectory())
    .map((entry) => entry.name)
    .sort()
    .map((name) => {
      const sql = readFileSync(join(folder, name, "migration.sql"), "utf8");
      return { name, sql, checksum: createHash("sha256").update(sql).digest("hex") };
    });
}

function checkHistory(files: MigrationFile[], applied: Map<string, string>): void {
  for (const [name, checksum] of applied) {
    const file = files.find((f) => f.name === name);
    if (!file) throw new Error(`Database has migration '${name}' that is not in the migrations folder`);
    if (file.checksum !== checksum) {
      throw new Error(`Migration '${name}' was changed after it was applied (checksum differs); add a new migration instead`);
    }
  }
}

function migrateSqlite(url: string, files: MigrationFile[]): MigrationReport {
  const path = sqlitePath(url);
  if (path !== ":memory:") mkdirSync(dirname(path), { recursive: true });
  const db = new Database(path, { timeout: SQLITE_BUSY_TIMEOUT_MS });
  try {
    // WAL lets readers run beside one writer; the setting persists in the file.
    db.pragma("journal_mode = WAL");
    db.pragma("foreign_keys = ON");
    db.exec(
      `CREATE TABLE IF NOT EXISTS "${MIGRATION_LEDGER}" ("name" TEXT PRIMARY KEY, "checksum" TEXT NOT NULL, "appliedAt" TEXT NOT NULL)`,
    );
    const report: MigrationReport = { provider: "sqlite", applied: [], alreadyApplied: [] };
    // IMMEDIATE takes the write lock first, so two processes starting at once apply each migration once.
    const run = db.transaction(() => {
      const rows = db.prepare(`SELECT "name", "checksum" FROM "${MIGRATION_LEDGER}"`).all() as { name: string; checksum: string }[];
      const applied = new Map(rows.map((r) => [r.name, r.checksum]));
      checkHistory(files, applied);
      for (const file of files) {
        if (applied.has(file.name)) {
          report.alreadyApplied.push(file.name);
          continue;
        }
        db.exec(file.sql);
        db.prepare(`INSERT INTO "${MIGRATION_LEDGER}" ("name", "checksum", "appliedAt") VALUES (?, ?, ?)`).run(
          file.name,
          file.checksum,
          new Date().toISOString(),
        );
        report.applied.push(file.name);
      }
    });
    run.immediate();
    return report;
  } finally {
    db.close();
  }
}

async function migratePostgres(url: string, files: MigrationFile[]): Promise<MigrationReport> {
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  const report: MigrationReport = { provider: "postgresql", applied: [], alreadyApplied: [] };
  try {
    await client.query("BEGIN");
    // One migrator at a time across processes; released at COMMIT or ROLLBACK.
    await client.query("SELECT pg_advisory_xact_lock(hashtext($1))", [MIGRATION_LEDGER]);
    await client.query(
      `CREATE TABLE IF NOT EXISTS "${MIGRATION_LEDGER}" ("name" TEXT PRIMARY KEY, "checksum" TEXT NOT NULL, "appliedAt" TIMESTAMPTZ NOT NULL)`,
    );
    const { rows } = await client.query<{ name: string; checksum: string }>(`SELECT "name", "checksum" FROM "${MIGRATION_LEDGER}"`);
    const applied = new Map(rows.map((r) => [r.name, r.checksum]));
    checkHistory(files, applied);
    for (const file of files) {
      if (applied.has(file.name)) {
        report.alreadyApplied.push(file.name);
        continue;
      }
      await client.query(file.sql);
      await client.query(`INSERT INTO "${MIGRATION_LEDGER}" ("name", "checksum", "appliedAt") VALUES ($1, $2, now())`, [
        file.name,
        file.checksum,
      ]);
      report.applied.push(file.name);
    }
    await client.query("COMMIT");
    return report;
  } catch (error) {
    await client.query("ROLLBACK").catch(() => undefined);
    throw error;
  } finally {
    await client.end();
  }
}

/** Brings the database at `url` up to the newest migration. A second run applies nothing. */
export async function migrateDatabase(url: string, options: MigrateOptions = {}): Promise<MigrationReport> {
  const provider = providerOf(url);
  const files = readMigrations(provider, options.migrationsRoot);
  return provider === "sqlite" ? migrateSqlite(url, files) : migratePostgres(url, files);
}
