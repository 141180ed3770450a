import { describe, expect, it } from "vitest";
import { screenshot, signInAs, startAppForSuite, watchConsole } from "./harness";

describe("the coordinator builds and runs an analysis on the demo network", () => {
  const suite = startAppForSuite({ seedDemo: true });

  it("saves an analysis with warming rate as a moderator, runs it, and shows forest and bubble plots that download as SVG", async () => {
    const page = await suite.browser.newPage({ acceptDownloads: true });
    const errors = watchConsole(page);
    await page.goto(`${suite.app.baseUrl}/sign-in`);
    await expect(page.getByText("demo network").first().isVisible()).resolves.toBe(true);
    await signInAs(page, suite.app, "coordinator");
    await screenshot(page, "network-demo");

    await page.goto(`${suite.app.baseUrl}/analyses/new`);
    await page.getByLabel("Analysis name").fill("Recruitment and warming");
    await page.getByLabel("Outcome", { exact: true }).selectOption("recruitment");
    await page.getByLabel("Level", { exact: true }).selectOption("within_year");
    await page.getByLabel("Term", { exact: true }).selectOption("linear");
    await page.getByRole("checkbox", { name: /Spring warming rate/ }).check();
    await screenshot(page, "analysis-builder");
    await page.getByRole("button", { name: "Save analysis" }).click();
    await page.waitForURL(/\/analyses\/\d+$/);
    await page.getByRole("button", { name: "Run", exact: true }).click();
    await page.waitForURL(/\/analyses\/\d+\?run=\d+$/);

    const k = Number(await page.locator(".summary-grid").getByText(/\d+ estimates/).first().textContent().then((t) => t!.match(/(\d+) estimates/)![1]));
    expect(k).toBeGreaterThan(10);
    const forest = page.getByRole("img", { name: /estimates and meta-regression/ });
    await expect(forest.isVisible()).resolves.toBe(true);
    expect(await forest.locator("g.forest-row").count()).toBe(k);
    const bubble = page.getByRole("img", { name: /against spring warming rate/i });
    await expect(bubble.isVisible()).resolves.toBe(true);
    expect(await bubble.locator("circle.bubble-point").count()).toBe(k);
    await screenshot(page, "analysis-results");

    const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("group", { name: /Download Forest plot/ }).getByRole("button", { name: "SVG" }).click()]);
    const path = await download.path();
    const svgText = (await import("node:fs")).readFileSync(path, "utf8");
    const parsed = await page.evaluate((text) => {
      const doc = new DOMParser().parseFromString(text, "image/svg+xml");
      return { error: doc.querySelector("parsererror") !== null, rows: doc.querySelectorAll("g.forest-row").length, root: doc.documentElement.nodeName };
    }, svgText);
    expect(parsed).toEqual({ error: false, rows: k, root: "svg" });

    await page.getByRole("link", { name: "Report" }).click();
    await page.waitForURL(/\/report\?run=\d+$/);
    await expect(page.getByRole("heading", { name: "Methods" }).isVisible()).resolves.toBe(true);
    await expect(page.getByText(/association between sites, not an effect within a site/).first().isVisible()).resolves.toBe(true);
    await screenshot(page, "analysis-report");

    // Every chart on the results and report pages has an accessible name.
    for (const img of await page.locator("svg[role=img]").all()) expect(await img.getAttribute("aria-labelledby")).toMatch(/-title /);
    expect(errors).toEqual([]);
  });
});
