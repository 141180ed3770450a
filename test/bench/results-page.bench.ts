/**
 * How fast the results page of a large analysis becomes interactive: 1,000 site-year estimates
 * (40 invented sites x 25 years) pooled by a random-effects meta-regression on one moderator, so
 * the page shows the summary, the forest plot (1,000 rows), the funnel plot (of the residuals)
 * and the bubble plot. The production build is served by `next start` on its own SQLite file and
 * loaded in headless Chromium, signed in as the coordinator; the page counts as interactive when
 * React has attached the handlers of the last chart's download buttons and a click on one
 * downloads. Prints the median of five loads after one warm-up. Target: under 1.5 s.
 */
import { execFileSync } from "node:child_process";
import { existsSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import type { Actor } from "@/lib/auth/actor";
import { createFirstCoordinator } from "@/lib/auth/create-first-coordinator";
import { createDb } from "@/lib/db/client";
import { migrateDatabase } from "@/lib/db/migrate";
import { createAnalysis } from "@/lib/analyses/analyses";
import { runAnalysis } from "@/lib/analyses/run-analysis";
import { analysisSpecificationSchema } from "@/lib/analyses/specification";
import { createSite } from "@/lib/network/create-site";
import { siteInputSchema } from "@/lib/network/site-input";
import { createModerator, setModeratorValue } from "@/lib/network/moderators";
import { moderatorInputSchema, moderatorValueInputSchema } from "@/lib/network/moderator-input";
import { writeSubmission } from "@/lib/submissions/write-submission";
import { createRandomStream } from "@/lib/stats/random/xoshiro128";
import { launchBrowser, startServer } from "@/test/e2e/harness";

const SITES = 40;
const YEARS = 25;
const LOADS = 5;
const TARGET_MS = 1500;
const PASSWORD = "benchmark-password-1";

async function prepareNetwork(databaseUrl: string): Promise<{ analysisId: number; runId: number; email: string }> {
  await migrateDatabase(databaseUrl);
  const db = createDb(databaseUrl);
  const email = "coordinator@bench.example.org";
  const { userId } = await createFirstCoordinator(db, { email, displayName: "Bench Coordinator", password: PASSWORD });
  const actor: Actor = { kind: "user", userId, role: "coordinator", label: "Bench Coordinator", siteIds: [], via: "none" };
  const random = createRandomStream(20250101);
  const normal = () => Math.sqrt(-2 * Math.log(1 - random.nextFloat())) * Math.cos(2 * Math.PI * random.nextFloat());
  await createModerator(db, moderatorInputSchema.parse({ key: "warming", label: "Warming", unit: "degrees C per decade", kind: "numeric", description: "Invented warming rate" }), actor);
  let sha = 0;
  for (let s = 0; s < SITES; s += 1) {
    const code = `B${String(s + 1).padStart(2, "0")}`;
    await createSite(db, siteInputSchema.parse({ code, name: `Bench site ${s + 1}`, species: { scientificName: s % 2 ? "Parus major" : "Cyanistes caeruleus", commonName: s % 2 ? "Great tit" : "Blue tit" }, latitude: 40 + (s % 25), longitude: -5 + s, firstYear: 1990, lastYear: 1990 + YEARS - 1 }), actor);
    const warming = 0.1 + 0.02 * s;
    await setModeratorValue(db, code, "warming", moderatorValueInputSchema.parse({ numericValue: warming }), actor);
    const rows = Array.from({ length: YEARS }, (_, y) => {
      const standardError = 0.01 + 0.03 * random.nextFloat();
      return {
        outcome: "recruitment", level: "within_year", term: "linear", year: 1990 + y,
        value: -0.03 + 0.01 * warming + Math.sqrt(0.0001 + standardError ** 2) * normal(), standardError, n: 120,
        scale: "per_day", link: "logit", method: "invented for the benchmark",
      };
    });
    await writeSubmission(db, { siteCode: code, kind: "estimates", fileName: `${code}.csv`, sha256: (++sha).toString(16).padStart(64, "0"), rows });
  }
  const spec = analysisSpecificationSchema.parse({ name: "Benchmark: 1,000 estimates", outcome: "recruitment", level: "within_year", term: "linear", grain: "site_year", moderators: ["warming"], test: "hksj" });
  const analysis = await createAnalysis(db, spec, actor);
  const run = await runAnalysis(db, analysis.id, actor);
  const k = (run.result.fit as { model: { k: number } }).model.k;
  if (k !== SITES * YEARS) throw new Error(`the benchmark analysis pools ${k} estimates, not ${SITES * YEARS}`);
  await db.$disconnect();
  return { analysisId: analysis.id, runId: run.id, email };
}

const median = (values: number[]) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)]!;

export async function runResultsPageBenchmark(): Promise<void> {
  if (!existsSync(join(process.cwd(), ".next", "BUILD_ID"))) {
    console.log("\nResults page: building the production app first (next build)");
    execFileSync(process.execPath, ["node_modules/next/dist/bin/next", "build"], { stdio: "ignore" });
  }
  const dir = mkdtempSync(join(tmpdir(), "phenopool-bench-results-"));
  const databaseUrl = `file:${join(dir, "bench.db")}`;
  const { analysisId, runId, email } = await prepareNetwork(databaseUrl);
  const server = await startServer({ databaseUrl });
  const browser = await launchBrowser();
  try {
    const page = await browser.newPage({ acceptDownloads: true, viewport: { width: 1280, height: 900 } });
    const errors: string[] = [];
    page.on("pageerror", (error) => errors.push(error.message));
    await page.goto(`${server.baseUrl}/sign-in`);
    await page.getByLabel("Email").fill(email);
    await page.getByLabel("Password").fill(PASSWORD);
    await page.getByRole("button", { name: "Sign in" }).click();
    await page.waitForURL(`${server.baseUrl}/`);
    const url = `${server.baseUrl}/analyses/${analysisId}?run=${runId}`;
    const samples: { responseStart: number; domContentLoaded: number; load: number; interactive: number; htmlKb: number }[] = [];
    for (let load = 0; load <= LOADS; load += 1) {
      const started = Date.now();
      const response = await page.goto(url, { waitUntil: "commit" });
      const html = (await response!.body()).length;
      const lastDownloads = page.getByRole("group", { name: /^Download Estimates against/ }).getByRole("button", { name: "Data (CSV)" });
      await lastDownloads.waitFor({ state: "attached" });
      // Hydrated: React has attached its props (and so the click handler) to the button.
      await page.waitForFunction(() => {
        const groups = [...document.querySelectorAll("[role=group][aria-label^='Download Estimates against']")];
        const button = groups.at(-1)?.querySelector("button:last-of-type");
        return button !== undefined && button !== null && Object.keys(button).some((key) => key.startsWith("__reactProps"));
      }, undefined, { polling: "raf" });
      const interactive = Date.now() - started;
      const [download] = await Promise.all([page.waitForEvent("download", { timeout: 10_000 }), lastDownloads.click()]);
      if (!download.suggestedFilename().endsWith(".csv")) throw new Error("the bubble plot's data download did not work");
      const timing = await page.evaluate(() => {
        const entry = performance.getEntriesByType("navigation")[0] as PerformanceNavigationTiming;
        return { responseStart: entry.responseStart, domContentLoaded: entry.domContentLoadedEventEnd, load: entry.loadEventEnd };
      });
      const rows = await page.getByRole("img", { name: /estimates and meta-regression/ }).locator("g.forest-row").count();
      if (rows !== SITES * YEARS) throw new Error(`the forest plot shows ${rows} rows, not ${SITES * YEARS}`);
      if (load > 0) samples.push({ ...timing, interactive, htmlKb: html / 1024 });
    }
    if (errors.length) throw new Error(`the results page raised errors: ${errors.join("; ")}`);
    const row = (name: string, pick: (s: (typeof samples)[number]) => number, unit = "ms") => `${name.padEnd(44)} ${median(samples.map(pick)).toFixed(0).padStart(7)} ${unit}`;
    console.log(`\nResults page with ${SITES * YEARS} estimates (meta-regression; forest, residual funnel and bubble plots), headless Chromium, median of ${LOADS} loads`);
    console.log(row("server response starts (navigation)", (s) => s.responseStart));
    console.log(row("DOMContentLoaded", (s) => s.domContentLoaded));
    console.log(row("load event", (s) => s.load));
    console.log(row("interactive (download handlers attached)", (s) => s.interactive));
    console.log(row("HTML size", (s) => s.htmlKb, "KB"));
    const interactive = median(samples.map((s) => s.interactive));
    console.log(interactive < TARGET_MS ? `target met: interactive in ${interactive.toFixed(0)} ms (< ${TARGET_MS} ms)` : `TARGET MISSED: interactive in ${interactive.toFixed(0)} ms (target < ${TARGET_MS} ms)`);
  } finally {
    await browser.close();
    await server.kill("SIGTERM");
    rmSync(dir, { recursive: true, force: true });
  }
}
