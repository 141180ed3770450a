import type { CliCommand } from "../command";
import { readEnv } from "../../config/env";
import { migrateDatabase } from "../../db/migrate";
import { redactUrl } from "../../db/provider";

export const migrateCommand: CliCommand = {
  name: "migrate",
  summary: "Create or upgrade the database named by DATABASE_URL (default: the embedded SQLite file).",
  usage: "migrate\n\nApplies every migration under prisma/migrations/<provider>/ not yet applied. Safe to run again.",
  async run(_args, io) {
    const { DATABASE_URL } = readEnv();
    const report = await migrateDatabase(DATABASE_URL);
    const what = report.applied.length ? `applied ${report.applied.join(", ")}` : "already up to date";
    io.stdout(`${report.provider} ${redactUrl(DATABASE_URL)}: ${what}\n`);
    return 0;
  },
};
