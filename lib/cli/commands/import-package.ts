import { existsSync, readFileSync, statSync } from "node:fs";
import type { CliCommand } from "../command";
import { AppError } from "../../errors/app-error";
import { getDb } from "../../db/client";
import { importDataPackage } from "../../export/import-data-package";
import { readPackageDirectory, zipToPackage } from "../../export/package-archive";

export const importPackageCommand: CliCommand = {
  name: "import-package",
  summary: "Restore a network from a data package written by export, into an empty database.",
  usage: [
    "import-package PATH",
    "",
    "PATH is a folder or .zip written by export. Every table is checked first (types, keys, the",
    "upload row rules); then everything is written in one transaction, or nothing. Refuses a",
    "database that already holds a network.",
  ].join("\n"),
  async run(args, io) {
    const path = args.find((a) => !a.startsWith("--"));
    if (!path) throw new AppError("invalid_input", "name the package: import-package PATH", [{ field: "PATH", message: "required" }]);
    if (!existsSync(path)) throw new AppError("not_found", `${path} does not exist`, [{ field: "PATH", message: "not found", value: path }]);
    const files = statSync(path).isDirectory() ? readPackageDirectory(path) : zipToPackage(readFileSync(path));
    const report = await importDataPackage(getDb(), files);
    const counts = Object.entries(report.rowCounts).map(([name, n]) => `${name} ${n}`).join(", ");
    io.stdout(`imported ${path}: ${counts}\n`);
    return 0;
  },
};
