/**
 * The truth file: the simulation's true parameters as JSON (data/demo-truth.json by default), so a
 * check of a pipeline run on the loaded demo database can compare against them. Tests need not
 * read it: simulateNetwork({ seed }).truth is the same object.
 */
import { mkdirSync, writeFileSync } from "node:fs";
import { dirname } from "node:path";
import type { NetworkTruth } from "./simulate/types";

export const DEFAULT_TRUTH_PATH = "data/demo-truth.json";

export function writeTruthFile(path: string, truth: NetworkTruth): void {
  mkdirSync(dirname(path), { recursive: true });
  writeFileSync(path, `${JSON.stringify(truth, null, 2)}\n`);
}
