import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser, Page } from "playwright-core";
import { createDb, type Db } from "@/lib/db/client";
import { launchBrowser, screenshot, signInAs, startApp, watchConsole, type RunningApp } from "./harness";
import { waitFor } from "./wait-for";
import { accessibilityProblems } from "./accessibility";

/**
 * The browser workbench on the demo network: the network page's table, filters, map and coverage
 * chart; a site's data quality, diagnostics and versions with diff and restore; the results
 * page's sensitivity plots; analyses with a permutation test run in the background with a
 * progress bar and a cancel button. Every page visited is checked for console errors, named
 * charts, named controls and keyboard focus.
 */
describe("the browser workbench", () => {
  let app: RunningApp;
  let browser: Browser;
  let db: Db;
  let page: Page;
  let errors: string[];
  const audited: Record<string, string[]> = {};
  const audit = async (name: string) => {
    audited[name] = await accessibilityProblems(page);
  };

  beforeAll(async () => {
    app = await startApp({ seedDemo: true });
    browser = await launchBrowser();
    db = createDb(app.databaseUrl);
    page = await browser.newPage({ acceptDownloads: true, viewport: { width: 1280, height: 900 } });
    errors = watchConsole(page);
    await signInAs(page, app, "coordinator");
  });
  afterAll(async () => {
    await db?.$disconnect();
    await browser?.close();
    await app?.stop();
  });

  it("network page: filters and sorts the sites table through the address, with a map and a coverage chart", async () => {
    const map = page.getByRole("img", { name: /Sites of the network \(25\)/ });
    await expect(map.isVisible()).resolves.toBe(true);
    expect(await map.locator("g.map-site").count()).toBe(25);
    const coverage = page.getByRole("img", { name: "Years covered by each site" });
    expect(await coverage.locator("g.coverage-row").count()).toBe(25);
    await expect(page.getByRole("list", { name: "Network totals" }).textContent()).resolves.toMatch(/site-years with records/);
    await audit("network");
    await screenshot(page, "network-workbench");

    await page.getByLabel("Species").selectOption("Parus major");
    await page.getByLabel("Latitude from (°N)").fill("45");
    await page.getByRole("button", { name: "Apply" }).click();
    await page.waitForURL(/species=Parus\+major/);
    const rows = page.getByRole("table", { name: "Sites" }).locator("tbody tr");
    const species = await rows.locator("td:nth-child(3)").allTextContents();
    expect(species.length).toBeGreaterThan(0);
    expect(species.every((s) => s.includes("Parus major"))).toBe(true);
    const latitudes = (await rows.locator("td:nth-child(4)").allTextContents()).map((t) => Number.parseFloat(t));
    expect(latitudes.every((l) => l >= 45)).toBe(true);
    expect(await page.getByRole("img", { name: /Sites shown/ }).locator("g.map-site").count()).toBe(species.length);

    // Sorting by a heading is a link (keyboard-operable); twice reverses the order.
    await page.getByRole("link", { name: "Latitude", exact: true }).click();
    await page.waitForURL(/sort=latitude/);
    await page.getByRole("link", { name: "Latitude", exact: true }).click();
    await page.waitForURL(/dir=desc/);
    const sorted = (await rows.locator("td:nth-child(4)").allTextContents()).map((t) => Number.parseFloat(t));
    expect(sorted).toEqual([...sorted].sort((a, b) => b - a));
    await expect(page.getByRole("columnheader", { name: /Latitude/ }).getAttribute("aria-sort")).resolves.toBe("descending");
    expect(species.length).toBe(sorted.length);

    await page.goto(`${app.baseUrl}/?lat_from=95&kind=nonsense`);
    await expect(page.locator(".form-error[role=alert]").textContent()).resolves.toMatch(/lat_from "95": latitude must be at most 90/);
    await screenshot(page, "network-filtered");
  });

  it("site page: data quality, diagnostics from the raw data, versions with diff and restore, and the recomputation's progress", async () => {
    const site = await db.site.findFirstOrThrow({ where: { broodRecords: { some: {} } }, orderBy: { code: "asc" } });
    await page.goto(`${app.baseUrl}/sites/${site.code}`);
    await expect(page.getByRole("table", { name: "Ranges" }).textContent()).resolves.toMatch(/Lay date/);
    const binned = page.getByRole("img", { name: new RegExp(`${site.code}: proportion of broods with a recruit against within-year mismatch`) });
    await expect(binned.isVisible()).resolves.toBe(true);
    await expect(binned.locator("desc").textContent()).resolves.toMatch(/passes through the overall mean/);
    await expect(page.getByRole("img", { name: new RegExp(`${site.code}: annual means against annual mean mismatch`) }).isVisible()).resolves.toBe(true);
    await page.getByRole("link", { name: "Recruits per female" }).click();
    await page.waitForURL(/outcome=recruits_per_female/);
    await expect(page.getByRole("img", { name: /recruits per female against within-year mismatch/i }).isVisible()).resolves.toBe(true);
    await audit("site");
    await screenshot(page, "site-page");

    // A second version of the brood records, through the upload page: one brood's recruits changed.
    const current = await db.broodRecord.findMany({ where: { siteId: site.id, submission: { status: "accepted" } }, orderBy: [{ year: "asc" }, { femaleId: "asc" }] });
    const changed = current.findIndex((b) => b.fledglings > b.recruits);
    const lines = current.map((b, i) => [b.femaleId, b.year, b.layDateDoy, b.hatchDateDoy ?? "", b.clutchSize, b.fledglings, b.recruits + (i === changed ? 1 : 0)].join(","));
    const file = join(mkdtempSync(join(tmpdir(), "phenopool-workbench-")), "broods-v2.csv");
    writeFileSync(file, ["Female,Year,Lay date,Hatch date,Clutch,Fledged,Recruits", ...lines].join("\n"));
    await page.goto(`${app.baseUrl}/sites/${site.code}/upload`);
    await audit("upload");
    await page.getByLabel("CSV, TSV or .xlsx file").setInputFiles(file);
    await page.getByRole("button", { name: "Check file" }).click();
    await page.getByRole("button", { name: "Accept this file" }).click();
    await page.getByRole("status").filter({ hasText: "Accepted as submission" }).waitFor();
    await waitFor("the first recomputation", async () => {
      const job = await db.job.findFirst({ where: { siteId: site.id }, orderBy: { id: "desc" } });
      return job && job.status !== "queued" && job.status !== "running" ? job : null;
    });

    await page.goto(`${app.baseUrl}/sites/${site.code}`);
    const versions = page.getByRole("table", { name: "Brood records: versions" });
    await expect(versions.locator("tbody tr").count()).resolves.toBe(2);
    await page.getByRole("link", { name: "What version 2 changed" }).click();
    await expect(page.getByRole("region", { name: "What version 2 changed" }).textContent()).resolves.toMatch(/0 rows added, 1 changed, 0 removed/);
    await page.getByRole("link", { name: "Restore version 1" }).click();
    const restore = page.getByRole("region", { name: "Restore version 1" });
    await expect(restore.textContent()).resolves.toMatch(/1 changed/);
    await audit("site-restore-preview");
    await restore.getByRole("button", { name: "Restore version 1" }).click();
    const restored = page.getByRole("status").filter({ hasText: "Restored" });
    await restored.waitFor();
    const jobId = Number((await restored.textContent())!.match(/recomputed \(job (\d+)\)/)![1]);
    // The recomputation runs in the background; the page shows it and then its outcome.
    await screenshot(page, "site-restored");
    await page.getByText(new RegExp(`Last background job ${jobId} \\(recomputing the site's estimates\\): succeeded`)).waitFor({ timeout: 90_000 });
    await expect(versions.locator("tbody tr").count()).resolves.toBe(3);
    await expect(versions.locator("tbody tr").first().textContent()).resolves.toMatch(/current/);
    const latest = await db.submission.findFirstOrThrow({ where: { siteId: site.id, kind: "brood_records", status: "accepted" } });
    const restoredRows = await db.broodRecord.count({ where: { submissionId: latest.id } });
    expect(restoredRows).toBe(current.length);
  });

  it("analyses with a permutation test run in the background with a progress bar, and a queued run can be cancelled", async () => {
    const create = async (name: string) => {
      await page.goto(`${app.baseUrl}/analyses/new`);
      await page.getByLabel("Analysis name").fill(name);
      await page.getByLabel("Outcome", { exact: true }).selectOption("recruitment");
      await page.getByRole("checkbox", { name: /Spring warming rate/ }).check();
      await page.getByRole("checkbox", { name: /Test the moderators by permuting/ }).check();
      await page.getByLabel("Number of permutations").fill("100000");
      await audit("builder");
      await page.getByRole("button", { name: "Save analysis" }).click();
      await page.waitForURL(/\/analyses\/\d+$/);
      return page.url();
    };
    const first = await create("Warming, permutation test");
    const second = await create("Warming, permutation test again");
    await page.goto(first);
    await page.getByRole("button", { name: /in the background/ }).click();
    await page.getByRole("status").filter({ hasText: "Queued as background job" }).waitFor();
    await page.goto(second);
    await page.getByRole("button", { name: /in the background/ }).click();
    await page.getByRole("status").filter({ hasText: "Queued as background job" }).waitFor();
    const secondJob = page.locator(".jobs .job").first();
    await secondJob.getByRole("progressbar").waitFor();
    await screenshot(page, "analysis-queued");
    await secondJob.getByRole("button", { name: "Cancel" }).click();
    await page.getByText(/Last background job \d+ \(running the analysis\): cancelled/).waitFor({ timeout: 30_000 });

    await page.goto(first);
    const done = await waitFor("the first run", async () => {
      const job = await db.job.findFirst({ where: { kind: "run_analysis" }, orderBy: { id: "asc" } });
      return job && job.status === "succeeded" ? job : job?.status === "failed" ? Promise.reject(new Error(job.message ?? "failed")) : null;
    });
    expect(done.status).toBe("succeeded");
    await page.goto(first);
    const permutation = page.getByLabel("Permutation test", { exact: true });
    await expect(permutation.textContent()).resolves.toMatch(/100,000 permutations, seed 1/);
    await expect(page.getByRole("columnheader", { name: "permutation p" }).isVisible()).resolves.toBe(true);
    const cancelled = await db.job.findFirstOrThrow({ where: { kind: "run_analysis" }, orderBy: { id: "desc" } });
    expect(cancelled.status).toBe("cancelled");
    expect(await db.analysisRun.count({ where: { analysisId: Number(second.split("/").at(-1)) } })).toBe(0);
  });

  it("results page: species diamonds, trim-and-fill, leave-one-out, influence and cumulative plots, each downloadable", async () => {
    await page.goto(`${app.baseUrl}/analyses/new`);
    await page.getByLabel("Analysis name").fill("Recruitment pooled");
    await page.getByLabel("Outcome", { exact: true }).selectOption("recruitment");
    await page.getByRole("button", { name: "Save analysis" }).click();
    await page.waitForURL(/\/analyses\/\d+$/);
    await page.getByRole("button", { name: "Run", exact: true }).click();
    await page.waitForURL(/\?run=\d+$/);
    await page.getByRole("link", { name: "group by species" }).click();
    await page.waitForURL(/group=species/);
    const forest = page.getByRole("img", { name: /estimates and pooled estimate/ });
    // Four species diamonds and the overall one.
    expect(await forest.locator("g.forest-summary").count()).toBe(5);
    await page.getByRole("link", { name: "show trim-and-fill" }).click();
    await page.waitForURL(/fill=on/);
    await expect(page.getByText(/Trim-and-fill \(L0/).isVisible()).resolves.toBe(true);
    // A run of a few dozen estimates shows its sensitivity analyses without being asked.
    const k = await forest.locator("g.forest-row").count();
    expect(await page.getByRole("img", { name: /leave-one-out/ }).locator("g.refit-row").count()).toBe(k);
    expect(await page.getByRole("img", { name: /influence of each estimate/ }).locator("g.influence-panel").count()).toBe(4);
    await expect(page.getByRole("img", { name: /Baujat plot/ }).isVisible()).resolves.toBe(true);
    expect(await page.getByRole("img", { name: /cumulative meta-analysis/ }).locator("g.refit-row").count()).toBeGreaterThan(1);
    await audit("results");
    await screenshot(page, "analysis-sensitivity");

    // Keyboard: the leave-one-out download is reached with Tab and works with Enter.
    const csvButton = page.getByRole("group", { name: /Download Leave-one-out/ }).getByRole("button", { name: "Data (CSV)" });
    await csvButton.focus();
    const [download] = await Promise.all([page.waitForEvent("download"), page.keyboard.press("Enter")]);
    expect(download.suggestedFilename()).toBe("leave-one-out.csv");

    // A multilevel model (species and estimate levels) with cluster-robust standard errors by species.
    const resultsUrl = page.url();
    await page.goto(`${app.baseUrl}/analyses/new`);
    await page.getByLabel("Analysis name").fill("Recruitment, species and site levels");
    await page.getByRole("checkbox", { name: "Species", exact: true }).check();
    await page.getByRole("checkbox", { name: /^Estimate/ }).check();
    await page.getByLabel("Cluster-robust (CR2) standard errors").selectOption("species");
    await page.getByRole("button", { name: "Save analysis" }).click();
    await page.waitForURL(/\/analyses\/\d+$/);
    await page.getByRole("button", { name: "Run", exact: true }).click();
    await page.waitForURL(/\?run=\d+$/);
    const components = page.getByRole("table", { name: "Variance components" });
    await expect(components.locator("tbody tr").count()).resolves.toBe(2);
    await expect(page.getByRole("table", { name: "Cluster-robust inference" }).textContent()).resolves.toMatch(/4 clusters by species/);
    await audit("multilevel-results");
    await screenshot(page, "analysis-multilevel");
    await page.goto(resultsUrl);
    await page.getByRole("link", { name: "Report" }).click();
    await page.waitForURL(/\/report\?run=\d+$/);
    await audit("report");
    await page.goto(`${app.baseUrl}/analyses`);
    await audit("analyses");
  });

  it("has no console errors, and every page visited names its charts and controls and keeps keyboard focus on controls", () => {
    expect(Object.keys(audited).sort()).toEqual(["analyses", "builder", "multilevel-results", "network", "report", "results", "site", "site-restore-preview", "upload"]);
    expect(audited).toEqual(Object.fromEntries(Object.keys(audited).map((name) => [name, []])));
    expect(errors).toEqual([]);
  });
});
