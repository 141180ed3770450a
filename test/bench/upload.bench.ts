/**
 * Speed and memory of a large upload: a brood-record CSV of 1,000,000 rows (over 60 MB) checked
 * (preview), accepted into an empty site, and accepted again with changes (the diff then reads
 * the million stored rows), on SQLite and on PostgreSQL when the test server answers.
 * Targets per step: under 30 s and under 1 GB peak resident memory.
 */
import { fork } from "node:child_process";
import { createWriteStream, mkdtempSync, rmSync, statSync } from "node:fs";
import { once } from "node:events";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import type { Actor } from "@/lib/auth/actor";
import { createDb, type Db } from "@/lib/db/client";
import type { DatabaseProvider } from "@/lib/db/provider";
import { migrateDatabase } from "@/lib/db/migrate";
import { uploadSourceFromFile } from "@/lib/ingest/upload-source";
import { acceptUpload } from "@/lib/submissions/accept-upload";
import { previewUpload } from "@/lib/submissions/preview-upload";
import type { UploadLimits } from "@/lib/submissions/scan-upload";
import { createEmptyDatabase, postgresAvailable } from "@/test/helpers/test-databases";

const ROWS = 1_000_000;
const LIMITS: UploadLimits = { maxBytes: 200 * 1024 * 1024, maxRows: 2_000_000, maxListedProblems: 10_000 };
const TARGET_SECONDS = 30;
const TARGET_PEAK_BYTES = 1024 * 1024 * 1024;
const actor: Actor = { kind: "user", userId: null, role: "coordinator", label: "benchmark", siteIds: [], via: "none" };

/** Writes the benchmark file: 50 years x 20,000 females, a notes column to bring it past 60 MB. */
async function writeBroodFile(path: string, changeEvery: number | null): Promise<void> {
  const out = createWriteStream(path);
  out.write("year;female ring;lay date;clutch size;hatch date;fledged;recruits;observer notes\n");
  let state = 20111;
  const next = () => {
    state = (state * 1103515245 + 12345) % 2147483648;
    return state / 2147483648;
  };
  let buffer = "";
  for (let i = 0; i < ROWS; i++) {
    const year = 1970 + Math.floor(i / 20_000);
    const lay = 90 + Math.floor(next() * 60);
    const clutch = 1 + Math.floor(next() * 12);
    let fledged = Math.floor(next() * (clutch + 1));
    if (changeEvery !== null && i % changeEvery === 0) fledged = Math.max(0, fledged - 1);
    const recruits = Math.floor(next() * (fledged + 1) * 0.3);
    const hatch = next() < 0.5 ? "" : String(lay + 14);
    buffer += `${year};F-${String(i % 20_000).padStart(6, "0")};${lay};${clutch};${hatch};${fledged};${recruits};box checked at dawn, female ringed, all well\n`;
    if (buffer.length > 1 << 20) {
      if (!out.write(buffer)) await once(out, "drain");
      buffer = "";
    }
  }
  out.end(buffer);
  await once(out, "finish");
}

/** Runs `step`, sampling the resident memory; returns seconds and the peak. */
async function measure<T>(step: () => Promise<T>): Promise<{ value: T; seconds: number; peakBytes: number }> {
  global.gc?.();
  let peak = process.memoryUsage().rss;
  const sampler = setInterval(() => {
    peak = Math.max(peak, process.memoryUsage().rss);
  }, 25);
  const start = process.hrtime.bigint();
  try {
    const value = await step();
    return { value, seconds: Number(process.hrtime.bigint() - start) / 1e9, peakBytes: Math.max(peak, process.memoryUsage().rss) };
  } finally {
    clearInterval(sampler);
  }
}

async function prepareSite(db: Db): Promise<void> {
  const species = await db.species.create({ data: { scientificName: "Ficedula hypoleuca", commonName: "Pied flycatcher" } });
  await db.site.create({ data: { code: "BIG", name: "Benchmark wood", speciesId: species.id, latitude: 60, longitude: 10, firstYear: 1970, lastYear: 2019 } });
}

type StepRow = [string, string, string, string, string, string];

/** One provider's three steps, in this process; returns the table rows and the targets missed. */
async function benchmarkProvider(provider: DatabaseProvider, first: string, second: string): Promise<{ rows: StepRow[]; missed: string[] }> {
  const rows: StepRow[] = [];
  const missed: string[] = [];
  const megabytes = (statSync(first).size / 1e6).toFixed(1);
  const { url, dropRaw } = await createEmptyDatabase(provider);
  await migrateDatabase(url);
  const db = createDb(url);
  try {
    await prepareSite(db);
    const request = { siteCode: "BIG", kind: "brood_records" as const };
    const steps: [string, () => Promise<{ rowCount: number; detail: string }>][] = [
      [
        `preview (${provider})`,
        async () => {
          const preview = await previewUpload(db, uploadSourceFromFile(first), request, LIMITS);
          if (!preview.acceptable) throw new Error(`benchmark file refused: ${preview.problems[0]?.reason}`);
          return { rowCount: preview.rowCount, detail: "" };
        },
      ],
      [
        `accept into an empty site (${provider})`,
        async () => {
          const accepted = await acceptUpload(db, uploadSourceFromFile(first), request, actor, LIMITS);
          return { rowCount: accepted.rowCount, detail: "" };
        },
      ],
      [
        `accept a new version, diff against 1M stored (${provider})`,
        async () => {
          const accepted = await acceptUpload(db, uploadSourceFromFile(second), request, actor, LIMITS);
          return { rowCount: accepted.rowCount, detail: ` (${accepted.diff.changed} changed)` };
        },
      ],
    ];
    for (const [name, step] of steps) {
      const { value, seconds, peakBytes } = await measure(step);
      rows.push([`${name}${value.detail}`, value.rowCount.toLocaleString("en"), megabytes, seconds.toFixed(2), (peakBytes / 2 ** 20).toFixed(0), `< ${TARGET_SECONDS} s, < 1024 MB`]);
      if (seconds >= TARGET_SECONDS) missed.push(`${name} took ${seconds.toFixed(1)} s`);
      if (peakBytes >= TARGET_PEAK_BYTES) missed.push(`${name} peaked at ${(peakBytes / 2 ** 20).toFixed(0)} MB`);
    }
  } finally {
    await db.$disconnect();
    await dropRaw();
  }
  return { rows, missed };
}

const CHILD_PROVIDER = "PHENOPOOL_UPLOAD_BENCH_PROVIDER";

/**
 * Each database's steps run in a process of their own, as a server would take them: the peak
 * resident memory of one provider's steps is not inflated by the other's heap.
 */
async function benchmarkInChild(provider: DatabaseProvider, first: string, second: string): Promise<{ rows: StepRow[]; missed: string[] }> {
  const child = fork(fileURLToPath(import.meta.url), [first, second], { execArgv: process.execArgv, env: { ...process.env, [CHILD_PROVIDER]: provider }, stdio: ["ignore", "inherit", "inherit", "ipc"] });
  const [result] = (await once(child, "message")) as [{ rows: StepRow[]; missed: string[] }];
  await once(child, "exit");
  return result;
}

if (process.env[CHILD_PROVIDER] && process.send) {
  const result = await benchmarkProvider(process.env[CHILD_PROVIDER] as DatabaseProvider, process.argv[2]!, process.argv[3]!);
  process.send(result);
}

export async function runUploadBenchmark(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), "phenopool-upload-bench-"));
  const rows: string[][] = [["step", "rows", "MB", "seconds", "peak RSS MB", "target"]];
  const missed: string[] = [];
  try {
    const first = join(dir, "broods-v1.csv");
    const second = join(dir, "broods-v2.csv");
    await writeBroodFile(first, null);
    await writeBroodFile(second, 100);
    const providers = (await postgresAvailable()) ? (["sqlite", "postgresql"] as const) : (["sqlite"] as const);
    for (const provider of providers) {
      const result = await benchmarkInChild(provider, first, second);
      rows.push(...result.rows);
      missed.push(...result.missed);
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  const widths = rows[0]!.map((_, j) => Math.max(...rows.map((r) => r[j]!.length)));
  console.log("\nUpload of a large brood-record file (each database's steps in a process of their own)");
  for (const r of rows) console.log(r.map((cell, j) => cell.padEnd(widths[j]!)).join("  "));
  if (missed.length) console.log(`TARGET MISSED: ${missed.join(", ")}`);
}
