import { spawn } from "node:child_process";
import { existsSync, mkdirSync, renameSync, rmSync, statSync } from "node:fs";
import { dirname } from "node:path";
import Database from "better-sqlite3";
import { providerOf, redactUrl, sqlitePath } from "../db/provider";
import { SQLITE_BUSY_TIMEOUT_MS } from "../db/client";

/**
 * Consistent snapshots of a running network, and their restore.
 * SQLite: VACUUM INTO writes the database as one read transaction sees it (in WAL mode that
 * snapshot holds while the server goes on writing, and no writer waits for it). The online backup
 * API is not used for this: it starts again whenever another connection writes, so under a steady
 * stream of writes it never finishes. PostgreSQL: pg_dump reads one snapshot (a repeatable-read
 * transaction) in its custom format; pg_restore brings it back in a single transaction.
 */

export interface BackupReport {
  provider: "sqlite" | "postgresql";
  file: string;
  bytes: number;
}

function run(command: string, args: string[], env: NodeJS.ProcessEnv = process.env): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn(command, args, { env, stdio: ["ignore", "ignore", "pipe"] });
    let stderr = "";
    child.stderr.on("data", (chunk: Buffer) => (stderr += chunk.toString()));
    child.on("error", (error) => reject(new Error(`${command} could not start: ${error.message}`)));
    child.on("close", (code) => (code === 0 ? resolve() : reject(new Error(`${command} failed (exit ${code}): ${stderr.trim()}`))));
  });
}

/** Writes a snapshot of the database at `url` to `file` (overwriting it only once the snapshot is complete). */
export async function backupDatabase(url: string, file: string): Promise<BackupReport> {
  mkdirSync(dirname(file), { recursive: true });
  const partial = `${file}.partial`;
  rmSync(partial, { force: true });
  if (providerOf(url) === "sqlite") {
    const source = sqlitePath(url);
    if (!existsSync(source)) throw new Error(`no SQLite database at ${source}`);
    const db = new Database(source, { readonly: true, timeout: SQLITE_BUSY_TIMEOUT_MS });
    try {
      db.prepare("VACUUM INTO ?").run(partial);
    } finally {
      db.close();
    }
    renameSync(partial, file);
    return { provider: "sqlite", file, bytes: statSync(file).size };
  }
  await run("pg_dump", ["--format=custom", "--no-owner", "--no-privileges", `--file=${partial}`, `--dbname=${url}`]);
  renameSync(partial, file);
  return { provider: "postgresql", file, bytes: statSync(file).size };
}

/**
 * Restores `file` into the database at `url`, replacing its contents. For SQLite the server must
 * be stopped (the file is swapped whole, with its write-ahead log removed); for PostgreSQL the
 * restore runs in one transaction, so a failure leaves the database as it was.
 */
export async function restoreDatabase(url: string, file: string): Promise<void> {
  if (!existsSync(file)) throw new Error(`no backup file at ${file}`);
  if (providerOf(url) === "sqlite") {
    const target = sqlitePath(url);
    const check = new Database(file, { readonly: true });
    try {
      const result = check.pragma("integrity_check", { simple: true });
      if (result !== "ok") throw new Error(`backup ${file} fails SQLite's integrity check: ${String(result)}`);
    } finally {
      check.close();
    }
    mkdirSync(dirname(target), { recursive: true });
    const staged = `${target}.restoring`;
    const copy = new Database(file, { readonly: true });
    try {
      await copy.backup(staged);
    } finally {
      copy.close();
    }
    for (const suffix of ["-wal", "-shm"]) rmSync(`${target}${suffix}`, { force: true });
    renameSync(staged, target);
    return;
  }
  await run("pg_restore", ["--clean", "--if-exists", "--no-owner", "--no-privileges", "--single-transaction", `--dbname=${url}`, file]);
}

export function describeTarget(url: string): string {
  return redactUrl(url);
}
