/**
 * Speed of the sensitivity and small-study analyses at k = 1,000 simulated site estimates
 * (tau^2 = 0.05): leave-one-out (1,000 REML refits with Q-profile intervals), influence
 * diagnostics (1,000 REML and 1,000 common-effect refits), cumulative meta-analysis (1,000
 * steps), the subgroup analysis over 10 subgroups, and all small-study analyses (Egger, the
 * regression on SE, the rank test with its O(k^2) pair count, trim-and-fill). Prints the median of
 * three runs each. Target: leave-one-out of k = 1,000 in under 5 s.
 */
import { metaData, type MetaData } from "@/lib/stats/meta/meta-data";
import { cumulativeMetaAnalysis } from "@/lib/stats/meta/sensitivity/cumulative";
import { influenceDiagnostics } from "@/lib/stats/meta/sensitivity/influence-diagnostics";
import { leaveOut } from "@/lib/stats/meta/sensitivity/leave-out";
import { subgroupAnalysis } from "@/lib/stats/meta/sensitivity/subgroups";
import { smallStudyAnalyses } from "@/lib/stats/meta/small-study/small-study-analyses";
import { createRandomStream } from "@/lib/stats/random/xoshiro128";

const K = 1000;
const TARGET_MS = 5000;

function simulate(k: number): { data: MetaData; years: Float64Array; species: string[] } {
  const random = createRandomStream(20240917);
  const normal = () => Math.sqrt(-2 * Math.log(1 - random.nextFloat())) * Math.cos(2 * Math.PI * random.nextFloat());
  const estimates = new Float64Array(k);
  const variances = new Float64Array(k);
  const years = new Float64Array(k);
  const species: string[] = [];
  for (let i = 0; i < k; i += 1) {
    variances[i] = 0.005 + 0.2 * random.nextFloat();
    estimates[i] = -0.2 + Math.sqrt(0.05 + variances[i]!) * normal();
    years[i] = 1980 + Math.floor(45 * random.nextFloat());
    species.push(`species ${i % 10}`);
  }
  return { data: metaData({ estimates, variances }), years, species };
}

function medianMs(run: () => unknown): number {
  const times: number[] = [];
  for (let r = 0; r < 3; r += 1) {
    const start = process.hrtime.bigint();
    run();
    times.push(Number(process.hrtime.bigint() - start) / 1e6);
  }
  return times.sort((a, b) => a - b)[1]!;
}

export async function runSensitivityBenchmark(): Promise<void> {
  const { data, years, species } = simulate(K);
  const rows: [string, number][] = [
    ["leave-one-out (REML)", medianMs(() => leaveOut(data, { method: "reml" }))],
    ["influence diagnostics (REML + common effect)", medianMs(() => influenceDiagnostics(data, { method: "reml" }))],
    ["cumulative by year (REML, 45 steps)", medianMs(() => cumulativeMetaAnalysis(data, { kind: "numeric", name: "year", values: years }, { method: "reml" }))],
    ["cumulative by row (REML, 1000 steps)", medianMs(() => cumulativeMetaAnalysis(data, { kind: "numeric", name: "row", values: Array.from({ length: K }, (_, i) => i) }, { method: "reml" }))],
    ["subgroups, 10 species (REML, separate)", medianMs(() => subgroupAnalysis(data, species, { method: "reml" }))],
    ["small-study analyses (REML, L0)", medianMs(() => smallStudyAnalyses(data, { method: "reml" }))],
  ];
  const width = Math.max(...rows.map(([name]) => name.length));
  console.log(`\nSensitivity and small-study analyses, k = ${K} (median of 3 runs)`);
  for (const [name, ms] of rows) console.log(`${name.padEnd(width)}  ${ms.toFixed(0).padStart(7)} ms`);
  const leaveOutMs = rows[0]![1];
  console.log(
    leaveOutMs < TARGET_MS
      ? `target met: leave-one-out of k = ${K} takes ${leaveOutMs.toFixed(0)} ms (< ${TARGET_MS} ms)`
      : `TARGET MISSED: leave-one-out of k = ${K} takes ${leaveOutMs.toFixed(0)} ms (target < ${TARGET_MS} ms)`,
  );
}
