import { mkdirSync, readdirSync, readFileSync, statSync, writeFileSync } from "node:fs";
import { dirname, join, relative, sep } from "node:path";
import { strFromU8, strToU8, unzipSync, zipSync } from "fflate";
import { AppError } from "../errors/app-error";

/**
 * A data package's files as a zip archive (what the API serves: one download a scientist can
 * unpack and open, datapackage.json at its root) or as a folder (what the CLI writes and reads).
 */

/** Every entry carries this modification time, so the same package gives the same bytes. */
const ZIP_ENTRY_TIME = new Date("2000-01-01T00:00:00Z");

export function packageToZip(files: ReadonlyMap<string, string>): Uint8Array {
  const entries: Record<string, [Uint8Array, { mtime: Date }]> = {};
  for (const [path, content] of files) entries[path] = [strToU8(content), { mtime: ZIP_ENTRY_TIME }];
  return zipSync(entries, { level: 6 });
}

/** The files of a zipped package. Throws AppError invalid_input when the bytes are not a zip archive. */
export function zipToPackage(bytes: Uint8Array): Map<string, string> {
  let entries: Record<string, Uint8Array>;
  try {
    entries = unzipSync(bytes);
  } catch (error) {
    throw new AppError("invalid_input", `not a zip archive: ${(error as Error).message}`, [{ field: "(file)", message: "expected a zip archive" }]);
  }
  return new Map(Object.entries(entries).filter(([path]) => !path.endsWith("/")).map(([path, data]) => [path, strFromU8(data)]));
}

export function writePackageDirectory(directory: string, files: ReadonlyMap<string, string>): void {
  for (const [path, content] of files) {
    const target = join(directory, ...path.split("/"));
    mkdirSync(dirname(target), { recursive: true });
    writeFileSync(target, content, "utf8");
  }
}

/** Every file under `directory`, by its path inside the package ("data/sites.csv"). */
export function readPackageDirectory(directory: string): Map<string, string> {
  const files = new Map<string, string>();
  const walk = (folder: string) => {
    for (const name of readdirSync(folder)) {
      const path = join(folder, name);
      if (statSync(path).isDirectory()) walk(path);
      else files.set(relative(directory, path).split(sep).join("/"), readFileSync(path, "utf8"));
    }
  };
  walk(directory);
  return files;
}
