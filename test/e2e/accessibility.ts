import type { Page } from "playwright-core";

/**
 * Checks a page for what every PhenoPool page must have: each chart (svg role=img) named by a
 * non-empty title and described, each form control and button with an accessible name, no
 * positive tabindex (keyboard order follows the page), and keyboard focus that moves through
 * interactive elements only. Returns the problems found, in words (empty when none).
 */
export async function accessibilityProblems(page: Page, tabPresses = 12): Promise<string[]> {
  const problems = await page.evaluate(() => {
    const found: string[] = [];
    const textOf = (id: string) => document.getElementById(id)?.textContent?.trim() ?? "";
    for (const svg of document.querySelectorAll("svg")) {
      if (svg.closest("svg") !== svg) continue;
      if (svg.getAttribute("role") !== "img") {
        if (svg.getAttribute("aria-hidden") !== "true") found.push(`an svg without role=img: ${svg.outerHTML.slice(0, 80)}`);
        continue;
      }
      const ids = (svg.getAttribute("aria-labelledby") ?? "").split(/\s+/).filter(Boolean);
      if (ids.length === 0 || !textOf(ids[0]!)) found.push(`a chart without an accessible name: ${svg.outerHTML.slice(0, 120)}`);
      if (ids.length < 2 || !textOf(ids[1]!)) found.push(`a chart without a description: ${textOf(ids[0] ?? "")}`);
    }
    const nameOf = (el: HTMLElement): string => {
      const labelledBy = el.getAttribute("aria-labelledby");
      if (labelledBy) return labelledBy.split(/\s+/).map(textOf).join(" ").trim();
      const aria = el.getAttribute("aria-label");
      if (aria) return aria.trim();
      const labels = (el as HTMLInputElement).labels;
      if (labels && labels.length) return [...labels].map((l) => l.textContent ?? "").join(" ").trim();
      if (el.tagName === "BUTTON" || el.tagName === "A" || el.tagName === "SUMMARY") return (el.textContent ?? "").trim();
      return (el.getAttribute("title") ?? "").trim();
    };
    for (const el of document.querySelectorAll<HTMLElement>("input, select, textarea, button, a[href], summary")) {
      if (el instanceof HTMLInputElement && el.type === "hidden") continue;
      if (!nameOf(el)) found.push(`a ${el.tagName.toLowerCase()} without an accessible name: ${el.outerHTML.slice(0, 100)}`);
    }
    for (const el of document.querySelectorAll<HTMLElement>("[tabindex]")) {
      if (Number(el.getAttribute("tabindex")) > 0) found.push(`a positive tabindex breaks the keyboard order: ${el.outerHTML.slice(0, 80)}`);
    }
    return found;
  });
  // Start the keyboard walk at the top of the page: focus a probe placed first in the body, then remove it.
  await page.evaluate(() => {
    const probe = document.createElement("button");
    probe.textContent = "start";
    document.body.prepend(probe);
    probe.focus();
    probe.remove();
  });
  // Fewer presses than tab stops, so the walk never runs off the end of the page into the browser.
  const stops = await page.locator("a[href], button:not([disabled]), input:not([type=hidden]):not([disabled]), select, textarea, summary, [tabindex='0']").count();
  const focused: string[] = [];
  for (let i = 0; i < Math.min(tabPresses, stops - 1); i += 1) {
    await page.keyboard.press("Tab");
    const tag = await page.evaluate(() => {
      const el = document.activeElement;
      if (!el || el === document.body) return "BODY";
      const rect = el.getBoundingClientRect();
      if (!(rect.width > 0 && rect.height > 0)) return `${el.tagName} (invisible)`;
      // A chart's scroll box takes focus so the keyboard can scroll it; it is named for that.
      return el.classList.contains("chart-scroll") && el.getAttribute("aria-label") ? "SCROLL" : el.tagName;
    });
    focused.push(tag);
  }
  const interactive = new Set(["A", "BUTTON", "INPUT", "SELECT", "TEXTAREA", "SUMMARY", "SCROLL"]);
  const stray = focused.filter((tag) => !interactive.has(tag));
  if (stray.length) problems.push(`keyboard focus reached non-interactive or invisible elements: ${stray.join(", ")} (sequence ${focused.join(" ")})`);
  return problems;
}
