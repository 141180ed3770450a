/**
 * Speed of the demo network: simulating it (pure), loading it into a fresh SQLite database (and
 * PostgreSQL when the test server answers) through the submission path, and the checksum over
 * every table. Targets: simulation under 3 s, each load under 60 s.
 */
import { createDb } from "@/lib/db/client";
import { networkChecksum } from "@/lib/db/network-checksum";
import { runSeed } from "@/seed/run-seed";
import { DEFAULT_DEMO_SEED, simulateNetwork } from "@/seed/simulate";
import { createEmptyDatabase, postgresAvailable } from "@/test/helpers/test-databases";

function seconds(start: bigint): number {
  return Number(process.hrtime.bigint() - start) / 1e9;
}

export async function runDemoNetworkBenchmark(): Promise<void> {
  const simulateStart = process.hrtime.bigint();
  const network = simulateNetwork({ seed: DEFAULT_DEMO_SEED });
  const simulateSeconds = seconds(simulateStart);
  const broods = network.sites.reduce((sum, s) => sum + s.broods.length, 0);
  const rows: string[][] = [
    ["step", "data", "seconds", "target"],
    ["simulate", `${network.sites.length} sites, ${broods.toLocaleString("en")} broods`, simulateSeconds.toFixed(2), "< 3"],
  ];
  const missed: string[] = simulateSeconds >= 3 ? ["simulation over 3 s"] : [];
  const providers = (await postgresAvailable()) ? (["sqlite", "postgresql"] as const) : (["sqlite"] as const);
  for (const provider of providers) {
    const { url, dropRaw } = await createEmptyDatabase(provider);
    try {
      const loadStart = process.hrtime.bigint();
      const result = await runSeed({ databaseUrl: url, seed: DEFAULT_DEMO_SEED, truthPath: null, accountsPath: null });
      const loadSeconds = seconds(loadStart);
      const db = createDb(url);
      const checksumStart = process.hrtime.bigint();
      const checksum = await networkChecksum(db);
      const checksumSeconds = seconds(checksumStart);
      await db.$disconnect();
      const loaded = result.status === "loaded" ? `${result.summary.broodRecords.toLocaleString("en")} broods, ${result.summary.submissions} submissions` : "skipped";
      rows.push([`migrate + load (${provider})`, loaded, loadSeconds.toFixed(2), "< 60"]);
      rows.push([`checksum (${provider})`, checksum.sha256.slice(0, 16), checksumSeconds.toFixed(2), ""]);
      if (loadSeconds >= 60) missed.push(`${provider} load over 60 s`);
    } finally {
      await dropRaw();
    }
  }
  const widths = rows[0]!.map((_, j) => Math.max(...rows.map((r) => r[j]!.length)));
  console.log("\nDemo network");
  for (const r of rows) console.log(r.map((cell, j) => cell.padEnd(widths[j]!)).join("  "));
  if (missed.length) console.log(`TARGET MISSED: ${missed.join(", ")}`);
}
