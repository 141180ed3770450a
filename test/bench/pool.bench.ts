/**
 * Speed of the pooling engine: fitMetaModel (everything it reports: coefficients, Q-profile
 * interval, pseudo-R^2 with its intercept-only refit, per-study diagnostics) for k = 1e3 ... 1e6
 * studies, DerSimonian-Laird and REML, intercept only and with three numeric moderators. Prints the
 * median time per fit and the process's peak resident memory after each k. When /usr/bin/python3
 * has statsmodels, combine_effects (DL, intercept only) runs on the same data in the same run and
 * the ratio is printed. Target: REML, k = 1e5, three moderators, under 50 ms per fit.
 */
import { execFileSync } from "node:child_process";
import { existsSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { metaData, type MetaData } from "@/lib/stats/meta/meta-data";
import { moderatorDesign } from "@/lib/stats/meta/moderator-design";
import type { DesignMatrix } from "@/lib/stats/linear/design-matrix";
import { createRandomStream, type RandomStream } from "@/lib/stats/random/xoshiro128";

const SIZES = [1e3, 1e4, 1e5, 1e6];
const TARGET_MS = 50;
const PYTHON = "/usr/bin/python3";

function normal(random: RandomStream): number {
  return Math.sqrt(-2 * Math.log(1 - random.nextFloat())) * Math.cos(2 * Math.PI * random.nextFloat());
}

/** k simulated site estimates with three moderators (tau^2 = 0.05). */
function simulate(k: number): { data: MetaData; design: DesignMatrix; estimates: Float64Array; variances: Float64Array } {
  const random = createRandomStream(20240611 + k);
  const warmth = new Float64Array(k);
  const latitude = new Float64Array(k);
  const year = new Float64Array(k);
  const estimates = new Float64Array(k);
  const variances = new Float64Array(k);
  for (let i = 0; i < k; i += 1) {
    warmth[i] = normal(random);
    latitude[i] = 40 + 25 * random.nextFloat();
    year[i] = 1980 + Math.floor(45 * random.nextFloat());
    variances[i] = 0.005 + 0.2 * random.nextFloat();
    const mean = -0.2 + 0.1 * warmth[i]! - 0.01 * (latitude[i]! - 50) + 0.004 * (year[i]! - 2000);
    estimates[i] = mean + Math.sqrt(0.05 + variances[i]!) * normal(random);
  }
  const { design } = moderatorDesign(k, [
    { kind: "numeric", name: "warmth", values: warmth },
    { kind: "numeric", name: "latitude", values: latitude },
    { kind: "numeric", name: "year", values: year },
  ]);
  return { data: metaData({ estimates, variances }), design, estimates, variances };
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)]!;
}

function timeFits(run: () => void, k: number): number {
  run(); // warm-up: compiles the kernels for this p and lets the JIT settle
  const repetitions = Math.max(3, Math.min(25, Math.round(3e6 / k)));
  const times: number[] = [];
  for (let r = 0; r < repetitions; r += 1) {
    const start = process.hrtime.bigint();
    run();
    times.push(Number(process.hrtime.bigint() - start) / 1e6);
  }
  return median(times);
}

function statsmodelsAvailable(): boolean {
  if (!existsSync(PYTHON)) return false;
  try {
    execFileSync(PYTHON, ["-c", "import statsmodels.stats.meta_analysis"], { stdio: "ignore" });
    return true;
  } catch {
    return false;
  }
}

const PYTHON_TIMING = String.raw`
import sys, time
import numpy as np
from statsmodels.stats.meta_analysis import combine_effects
y = np.fromfile(sys.argv[1], dtype="<f8")
v = np.fromfile(sys.argv[2], dtype="<f8")
repetitions = int(sys.argv[3])
combine_effects(y, v, method_re="chi2")
times = []
for _ in range(repetitions):
    start = time.perf_counter()
    combine_effects(y, v, method_re="chi2")
    times.append(time.perf_counter() - start)
times.sort()
print(times[len(times) // 2] * 1000)
`;

function statsmodelsMilliseconds(estimates: Float64Array, variances: Float64Array, k: number): number {
  const dir = mkdtempSync(join(tmpdir(), "phenopool-pool-bench-"));
  try {
    writeFileSync(join(dir, "y.f64"), Buffer.from(estimates.buffer, estimates.byteOffset, estimates.byteLength));
    writeFileSync(join(dir, "v.f64"), Buffer.from(variances.buffer, variances.byteOffset, variances.byteLength));
    writeFileSync(join(dir, "time.py"), PYTHON_TIMING);
    const repetitions = String(Math.max(3, Math.min(25, Math.round(3e6 / k))));
    return Number(execFileSync(PYTHON, [join(dir, "time.py"), join(dir, "y.f64"), join(dir, "v.f64"), repetitions], { encoding: "utf8" }).trim());
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

export async function runPoolBenchmark(): Promise<void> {
  const withPython = statsmodelsAvailable();
  const rows: string[][] = [["k", "DL ms", "DL + 3 mod ms", "REML ms", "REML + 3 mod ms", "peak RSS MiB", "statsmodels DL ms", "statsmodels / PhenoPool DL"]];
  let targetMs = Number.NaN;
  for (const k of SIZES) {
    const { data, design, estimates, variances } = simulate(k);
    const dl = timeFits(() => fitMetaModel(data, { method: "dl" }), k);
    const dlModerated = timeFits(() => fitMetaModel(data, { method: "dl", design }), k);
    const reml = timeFits(() => fitMetaModel(data, { method: "reml" }), k);
    const remlModerated = timeFits(() => fitMetaModel(data, { method: "reml", design }), k);
    if (k === 1e5) targetMs = remlModerated;
    const peakMiB = process.resourceUsage().maxRSS / 1024;
    const python = withPython ? statsmodelsMilliseconds(estimates, variances, k) : null;
    rows.push([
      k.toExponential(0),
      dl.toFixed(2),
      dlModerated.toFixed(2),
      reml.toFixed(2),
      remlModerated.toFixed(2),
      peakMiB.toFixed(0),
      python === null ? "n/a" : python.toFixed(2),
      python === null ? "python3/statsmodels not found" : `${(python / dl).toFixed(2)}x`,
    ]);
  }
  const widths = rows[0]!.map((_, j) => Math.max(...rows.map((r) => r[j]!.length)));
  console.log("\nPooling engine (fitMetaModel, all outputs; median per fit)");
  for (const r of rows) console.log(r.map((cell, j) => cell.padStart(widths[j]!)).join("  "));
  console.log("peak RSS: the process's maximum resident set so far (includes the simulated data and earlier rows).");
  console.log(
    targetMs < TARGET_MS
      ? `target met: REML with 3 moderators at k = 1e5 takes ${targetMs.toFixed(1)} ms (< ${TARGET_MS} ms)`
      : `TARGET MISSED: REML with 3 moderators at k = 1e5 takes ${targetMs.toFixed(1)} ms (target < ${TARGET_MS} ms)`,
  );
}
