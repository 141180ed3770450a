import type { CliCommand } from "../command";
import { readEnv } from "../../config/env";
import { backupDatabase, describeTarget, restoreDatabase } from "../../ops/backup";
import { AppError } from "../../errors/app-error";

function defaultBackupFile(provider: "sqlite" | "postgresql"): string {
  const stamp = new Date().toISOString().replace(/[:.]/g, "-");
  return `data/backups/phenopool-${stamp}.${provider === "sqlite" ? "sqlite" : "pgdump"}`;
}

export const backupCommand: CliCommand = {
  name: "backup",
  summary: "Write a consistent snapshot of the database while the server runs.",
  usage: "backup [FILE]\n\nSQLite: the online backup API; PostgreSQL: pg_dump (custom format). Default FILE: data/backups/phenopool-<time>.<sqlite|pgdump>.",
  async run(args, io) {
    const { DATABASE_URL } = readEnv();
    const provider = DATABASE_URL.startsWith("file:") ? "sqlite" : "postgresql";
    const report = await backupDatabase(DATABASE_URL, args[0] ?? defaultBackupFile(provider));
    io.stdout(`backed up ${describeTarget(DATABASE_URL)} to ${report.file} (${report.bytes} bytes)\n`);
    return 0;
  },
};

export const restoreCommand: CliCommand = {
  name: "restore",
  summary: "Replace the database's contents with a backup (stop the server first on SQLite).",
  usage: "restore FILE --yes\n\nReplaces everything in the database named by DATABASE_URL with the backup in FILE.",
  async run(args, io) {
    const file = args.find((a) => !a.startsWith("--"));
    if (!file) throw new AppError("invalid_input", "name the backup file: restore FILE --yes");
    if (!args.includes("--yes")) throw new AppError("invalid_input", "restore replaces the whole database; add --yes to confirm");
    const { DATABASE_URL } = readEnv();
    await restoreDatabase(DATABASE_URL, file);
    io.stdout(`restored ${file} into ${describeTarget(DATABASE_URL)}\n`);
    return 0;
  },
};
