import { describe, expect, it } from "vitest";
import { screenshot, startAppForSuite, watchConsole } from "./harness";

describe("first run on an empty network", () => {
  const suite = startAppForSuite({ seedDemo: false });

  it("asks for the coordinator account, then signs the coordinator in", async () => {
    const page = await suite.browser.newPage();
    const errors = watchConsole(page);
    await page.goto(`${suite.app.baseUrl}/`);
    expect(new URL(page.url()).pathname).toBe("/setup");
    await screenshot(page, "setup");
    await page.getByLabel("Your name").fill("First Coordinator");
    await page.getByLabel("Email").fill("first@example.org");
    await page.getByLabel("Password (at least 10 characters)").fill("short");
    await page.getByRole("button", { name: "Create coordinator account" }).click();
    // The browser's own minlength check or the server's message: either way we stay on setup.
    expect(new URL(page.url()).pathname).toBe("/setup");
    await page.getByLabel("Password (at least 10 characters)").fill("a-long-enough-password");
    await page.getByRole("button", { name: "Create coordinator account" }).click();
    await page.waitForURL(`${suite.app.baseUrl}/`);
    await expect(page.getByRole("heading", { name: "Network" }).isVisible()).resolves.toBe(true);
    await expect(page.getByText("First Coordinator (coordinator)").isVisible()).resolves.toBe(true);
    await screenshot(page, "network-empty");
    await page.getByRole("button", { name: "Sign out", exact: true }).click();
    await page.waitForURL(`${suite.app.baseUrl}/sign-in`);
    expect(errors).toEqual([]);
  });
});
