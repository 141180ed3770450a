import { existsSync, mkdirSync, readdirSync, statSync, writeFileSync } from "node:fs";
import { dirname } from "node:path";
import type { CliCommand } from "../command";
import { AppError } from "../../errors/app-error";
import { getDb } from "../../db/client";
import { exportDataPackage } from "../../export/data-package";
import { packageToZip, writePackageDirectory } from "../../export/package-archive";

function optionValue(args: string[], name: string): string | undefined {
  const index = args.indexOf(name);
  if (index === -1) return undefined;
  const value = args[index + 1];
  if (value === undefined || value.startsWith("--")) throw new AppError("invalid_input", `${name} needs a value`, [{ field: name, message: "missing value" }]);
  return value;
}

const plural = (n: number, word: string) => `${n} ${word}${n === 1 ? "" : "s"}`;

export const exportCommand: CliCommand = {
  name: "export",
  summary: "Write the whole network as a Frictionless Data Package (a folder, or a .zip).",
  usage: [
    "export --out PATH",
    "",
    "Writes datapackage.json (a Table Schema per resource) and data/<resource>.csv for users, species,",
    "sites, moderators, moderator values, submissions, site-years, brood records, estimates, analyses,",
    "analysis runs, network settings and column mappings. PATH ending in .zip: one zip archive;",
    "otherwise a folder, which must be empty or new. Read it back with import-package.",
  ].join("\n"),
  async run(args, io) {
    const out = optionValue(args, "--out");
    if (!out) throw new AppError("invalid_input", "say where to write the package: export --out PATH", [{ field: "--out", message: "required" }]);
    const asZip = out.toLowerCase().endsWith(".zip");
    if (!asZip && existsSync(out) && (!statSync(out).isDirectory() || readdirSync(out).length > 0)) {
      throw new AppError("invalid_input", `${out} exists and is not an empty folder; choose a new folder`, [{ field: "--out", message: "not an empty folder", value: out }]);
    }
    const { files, rowCounts } = await exportDataPackage(getDb());
    if (asZip) {
      mkdirSync(dirname(out), { recursive: true });
      writeFileSync(out, packageToZip(files));
    } else writePackageDirectory(out, files);
    const counts = Object.entries(rowCounts).map(([name, n]) => `${name} ${n}`).join(", ");
    io.stdout(`wrote ${out}: ${plural(files.size, "file")} (${counts})\n`);
    return 0;
  },
};
