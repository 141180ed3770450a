import { describe, expect, it } from "vitest";
import type { Page } from "playwright-core";
import { screenshot, signInAs, startAppForSuite, watchConsole, type RunningApp } from "./harness";

/**
 * Accounts, roles and the audit trail in the production build on the demo network: the sign-in
 * page says the data are invented, navigation follows the role, a site lead's API token works on
 * the lead's own site only and stops when revoked, and the coordinator sees it all in the audit
 * trail and its CSV export.
 */
const estimateRow = { outcome: "recruitment", level: "within_year", term: "linear", year: null, value: -0.07, standardError: 0.03, n: 90, scale: "per_day", link: "logit", method: "Wald" };

describe("accounts, roles and the audit trail on the demo network", () => {
  const suite = startAppForSuite({ seedDemo: true });

  it("tells visitors the network is a demo, and keeps the coordinator's pages from a site lead", async () => {
    const page = await suite.browser.newPage();
    const errors = watchConsole(page);
    await page.goto(`${suite.app.baseUrl}/`);
    expect(new URL(page.url()).pathname).toBe("/sign-in");
    await expect(page.getByRole("note").textContent()).resolves.toMatch(/demo network.*invented sites and simulated birds/s);
    await screenshot(page, "sign-in-demo");
    await signInAs(page, suite.app, "site_lead");
    const nav = page.getByRole("navigation", { name: "Main" });
    await expect(nav.getByRole("link", { name: "API tokens" }).isVisible()).resolves.toBe(true);
    expect(await nav.getByRole("link", { name: "Accounts" }).count()).toBe(0);
    expect(await nav.getByRole("link", { name: "Audit trail" }).count()).toBe(0);
    await page.goto(`${suite.app.baseUrl}/admin/users`);
    await page.waitForURL(/\/refused\?action=user\.manage$/);
    await expect(page.getByText("That page is for the coordinator.").isVisible()).resolves.toBe(true);
    // The session cookie: HttpOnly, SameSite=Lax, and not Secure on this plain-HTTP loopback server.
    const cookies = await page.context().cookies();
    expect(cookies.find((c) => c.name === "phenopool_session")).toMatchObject({ httpOnly: true, sameSite: "Lax", secure: false });
    expect(errors).toEqual([]);
  });

  it("lets a site lead create an API token shown once, upload with it to their own site only, and revoke it", async () => {
    const page = await suite.browser.newPage();
    const errors = watchConsole(page);
    const lead = await signInAs(page, suite.app, "site_lead");
    const sites = (await (await fetch(`${suite.app.baseUrl}/api/v1/sites`, { headers: { cookie: await sessionCookie(page) } })).json()) as { items: { code: string }[] };
    await page.goto(`${suite.app.baseUrl}/account/tokens`);
    await page.getByLabel("Name (what the token is for)").fill("nightly upload");
    await page.getByRole("button", { name: "Create token" }).click();
    const secret = (await page.locator("code.secret").textContent())!;
    expect(secret).toMatch(/^ppt_[A-Za-z0-9_-]{20,}$/);
    await screenshot(page, "token-created");

    const ownSite = await leadSiteCode(suite.app, lead.email);
    const otherSite = sites.items.map((s) => s.code).find((code) => code !== ownSite)!;
    const upload = (siteCode: string) =>
      fetch(`${suite.app.baseUrl}/api/v1/submissions`, {
        method: "POST",
        headers: { authorization: `Bearer ${secret}`, "content-type": "application/json" },
        body: JSON.stringify({ siteCode, kind: "estimates", fileName: "scripted.json", rows: [estimateRow] }),
      });
    expect((await upload(ownSite)).status).toBe(201);
    const refused = await upload(otherSite);
    expect(refused.status).toBe(403);
    expect(((await refused.json()) as { error: { message: string } }).error.message).toBe("site leads may change only their own sites");

    await page.reload();
    expect(await page.locator("code.secret").count()).toBe(0);
    const row = page.getByRole("row", { name: /nightly upload/ });
    await expect(row.getByRole("cell").nth(3).textContent()).resolves.toMatch(/^\d{4}-\d\d-\d\d \d\d:\d\d UTC$/);
    await row.getByRole("button", { name: "Revoke" }).click();
    await expect(page.getByRole("row", { name: /nightly upload/ }).getByText(/^revoked/).waitFor()).resolves.toBeUndefined();
    expect((await upload(ownSite)).status).toBe(401);
    await screenshot(page, "tokens-revoked");
    expect(errors).toEqual([]);
  });

  it("shows the coordinator who did what in the audit trail, filtered and as CSV, and refuses a cross-site change", async () => {
    const page = await suite.browser.newPage({ acceptDownloads: true });
    const errors = watchConsole(page);
    await signInAs(page, suite.app, "coordinator");
    const nav = page.getByRole("navigation", { name: "Main" });
    for (const name of ["Accounts", "Audit trail", "Settings", "API tokens"]) await expect(nav.getByRole("link", { name }).isVisible()).resolves.toBe(true);
    await page.goto(`${suite.app.baseUrl}/admin/audit`);
    await page.getByLabel("Action").selectOption("submission.json");
    await page.getByRole("button", { name: "Filter" }).click();
    await page.waitForURL(/action=submission\.json/);
    const rows = page.locator("table.data tbody tr");
    expect(await rows.count()).toBe(1);
    await expect(rows.first().textContent()).resolves.toMatch(/submission\.json.*scripted\.json/s);
    await screenshot(page, "audit-trail");
    const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: /Download CSV/ }).click()]);
    const csv = (await import("node:fs")).readFileSync((await download.path())!, "utf8");
    expect(csv.split("\r\n")[0]).toBe("id,at,actorUserId,actor,action,entityType,entityId,before,after,sha256");
    expect(csv.trim().split("\r\n")).toHaveLength(2);

    const cookie = await sessionCookie(page);
    const crossSite = await fetch(`${suite.app.baseUrl}/api/v1/moderators`, {
      method: "POST",
      headers: { cookie, origin: "https://elsewhere.example", "sec-fetch-site": "cross-site", "content-type": "application/json" },
      body: JSON.stringify({ key: "box_age", label: "Box age", kind: "numeric", description: "Mean age of the nest boxes." }),
    });
    expect(crossSite.status).toBe(403);

    await page.goto(`${suite.app.baseUrl}/admin/settings`);
    await page.getByLabel(/may read every site's raw brood records/).check();
    await page.getByRole("button", { name: "Save settings" }).click();
    await expect(page.getByRole("status").textContent()).resolves.toBe("Settings saved.");
    await page.goto(`${suite.app.baseUrl}/admin/users`);
    await expect(page.getByRole("heading", { name: "Accounts" }).isVisible()).resolves.toBe(true);
    await screenshot(page, "accounts");
    expect(errors).toEqual([]);
  });
});

async function sessionCookie(page: Page): Promise<string> {
  const session = (await page.context().cookies()).find((c) => c.name === "phenopool_session");
  if (!session) throw new Error("not signed in");
  return `phenopool_session=${session.value}`;
}

/** The code of a site the lead leads, read from the app's database. */
async function leadSiteCode(app: RunningApp, email: string): Promise<string> {
  const { createDb } = await import("@/lib/db/client");
  const db = createDb(app.databaseUrl);
  try {
    return (await db.site.findFirstOrThrow({ where: { leadUser: { email } }, select: { code: true } })).code;
  } finally {
    await db.$disconnect();
  }
}
