import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";

/** Reads test/fixtures/r-stats/<name> (written by test/fixtures/r-stats/brood-estimates-fixtures.R). */
export function readRFixture<T>(name: string): T {
  return JSON.parse(readFileSync(fileURLToPath(new URL(`../fixtures/r-stats/${name}`, import.meta.url)), "utf8")) as T;
}
