import { writeFileSync, mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createDb, type Db } from "@/lib/db/client";
import { screenshot, signInWith, startAppForSuite, watchConsole } from "./harness";
import { waitFor } from "./wait-for";

describe("a site lead uploads brood records", () => {
  const suite = startAppForSuite({ seedDemo: true });
  let db: Db;
  beforeAll(() => {
    db = createDb(suite.app.databaseUrl);
  });
  afterAll(async () => {
    await db?.$disconnect();
  });

  it("sees the bad row named, fixes it, accepts, and gets the site's new estimates", async () => {
    const site = await db.site.findFirstOrThrow({ where: { broodRecords: { some: {} } }, include: { leadUser: true }, orderBy: { code: "asc" } });
    const lead = suite.app.accounts.find((a) => a.email === site.leadUser!.email)!;
    const current = await db.broodRecord.findMany({ where: { siteId: site.id, submission: { status: "accepted" } }, orderBy: [{ year: "asc" }, { femaleId: "asc" }] });
    const before = await db.estimate.findMany({ where: { siteId: site.id, source: "computed" }, select: { id: true } });
    const header = "Female,Year,Lay date,Hatch date,Clutch,Fledged,Recruits";
    const csvLine = (b: (typeof current)[number], fledglings: number, recruits: number) => [b.femaleId, b.year, b.layDateDoy, b.hatchDateDoy ?? "", b.clutchSize, fledglings, recruits].join(",");
    const lines = current.map((b) => csvLine(b, b.fledglings, b.recruits));
    // One bad row: more fledglings than eggs.
    const badRow = 3;
    const bad = current[badRow - 1]!;
    lines[badRow - 1] = csvLine(bad, bad.clutchSize + 3, 0);
    const dir = mkdtempSync(join(tmpdir(), "phenopool-upload-"));
    const badFile = join(dir, "broods-with-error.csv");
    writeFileSync(badFile, [header, ...lines].join("\n"));
    // The same file fixed, with one brood's recruits changed so the new version differs.
    lines[badRow - 1] = csvLine(bad, bad.fledglings, bad.recruits);
    const changedIndex = current.findIndex((b, i) => i !== badRow - 1 && b.fledglings > b.recruits);
    const changed = current[changedIndex]!;
    lines[changedIndex] = csvLine(changed, changed.fledglings, changed.recruits + 1);
    const goodFile = join(dir, "broods-fixed.csv");
    writeFileSync(goodFile, [header, ...lines].join("\n"));

    const page = await suite.browser.newPage();
    const errors = watchConsole(page);
    await signInWith(page, suite.app, lead);
    await page.goto(`${suite.app.baseUrl}/sites/${site.code}`);
    await page.getByRole("link", { name: "Upload a file" }).click();
    await page.waitForURL(/\/upload$/);

    await page.getByLabel("CSV, TSV or .xlsx file").setInputFiles(badFile);
    await page.getByRole("button", { name: "Check file" }).click();
    const problems = page.getByRole("table").filter({ hasText: "Problems" });
    await problems.waitFor();
    const row = problems.locator("tbody tr").first();
    await expect(row.locator("td").nth(0).textContent()).resolves.toBe(String(badRow));
    await expect(row.locator("td").nth(2).textContent()).resolves.toBe("Fledged");
    await expect(row.locator("td").nth(4).textContent()).resolves.toMatch(/exceeds/);
    await expect(page.getByRole("button", { name: "Accept this file" }).count()).resolves.toBe(0);
    await screenshot(page, "upload-problem");

    await page.getByLabel("CSV, TSV or .xlsx file").setInputFiles(goodFile);
    await page.getByRole("button", { name: "Check again" }).click();
    await page.getByRole("button", { name: "Accept this file" }).waitFor();
    await expect(page.locator(".diff-summary").textContent()).resolves.toMatch(/0 rows added, 1 changed, 0 removed/);
    await page.getByRole("button", { name: "Accept this file" }).click();
    await page.getByRole("status").filter({ hasText: "Accepted as submission" }).waitFor().catch(async (error: unknown) => {
      await screenshot(page, "upload-accept-failed");
      throw new Error(`${(error as Error).message}\npage says: ${(await page.getByRole("alert").allTextContents()).join(" | ")}`);
    });
    await screenshot(page, "upload-accepted");

    // The recomputation runs off the request path; when it is done the site has a new computed set.
    await waitFor("the recomputed estimates", async () => {
      const job = await db.job.findFirst({ where: { siteId: site.id, kind: "recompute_site_estimates" }, orderBy: { id: "desc" } });
      if (job?.status === "failed") throw new Error(`recompute failed: ${job.message}`);
      return job?.status === "succeeded" ? job : null;
    });
    const after = await db.estimate.findMany({ where: { siteId: site.id, source: "computed" }, select: { id: true } });
    expect(after.length).toBeGreaterThan(0);
    expect(after.map((e) => e.id)).not.toEqual(before.map((e) => e.id));
    await page.goto(`${suite.app.baseUrl}/sites/${site.code}`);
    await expect(page.getByRole("table").filter({ hasText: "Current estimates" }).locator("tbody tr").count()).resolves.toBeGreaterThan(0);
    await screenshot(page, "site-after-upload");
    expect(errors).toEqual([]);
  });
});
