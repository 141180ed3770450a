import { describe, expect, it } from "vitest";
import { simulateNetwork } from "@/seed/simulate";
import { computeSiteEstimates } from "@/lib/estimates/compute-site-estimates";

/**
 * The pipeline recovers the simulator's true within-year effects. Not flaky: the network is
 * simulated with a fixed seed (2026, the demo's), so the data and every estimate are the same on
 * every run. The tolerances are what a correct estimator passes for almost any seed:
 *  - each site-level coefficient lies within 4 of its own SEs of the truth (a 4-SE miss has
 *    probability 6e-5 per estimate under correct SEs);
 *  - at least 90% lie within 2 SEs (95% expected);
 *  - the standardised errors (estimate - truth) / SE average within +/- 3 / sqrt(m) of 0 (no bias)
 *    and their SD lies in [0.7, 1.3] (SEs neither too small nor too large).
 * The truth compared is the simulator's pipelineTarget: the generating parameter where the model
 * is exact, otherwise what the pipeline's estimator converges to on that design (seed/simulate/truth.ts).
 */
describe("demo network: recovery of the true within-year effects (seed 2026)", () => {
  const network = simulateNetwork({ seed: 2026 });
  const standardised: { label: string; z: number }[] = [];
  for (const siteData of network.sites) {
    if (siteData.site.contribution !== "brood_records") continue;
    const truth = network.truth.sites.find((s) => s.code === siteData.site.code)!;
    const peaks = new Map(siteData.siteYears.map((y) => [y.year, y.foodPeakDoy]));
    const result = computeSiteEstimates(siteData.broods, peaks, { offsetDays: network.truth.definitions.mismatchOffsetDays, selectionGradients: false });
    for (const [outcome, coefficients] of Object.entries(truth.withinYear)) {
      for (const term of ["linear", "quadratic"] as const) {
        const estimate = result.estimates.find((e) => e.outcome === outcome && e.level === "within_year" && e.term === term && e.year === null);
        if (!estimate) continue;
        standardised.push({ label: `${truth.code} ${outcome} ${term}`, z: (estimate.estimate - coefficients![term].pipelineTarget) / estimate.se });
      }
    }
  }

  it("estimates every raw-data site's four outcomes", () => {
    const rawSites = network.sites.filter((s) => s.site.contribution === "brood_records").length;
    expect(rawSites).toBeGreaterThan(0);
    expect(standardised.length).toBe(rawSites * 4 * 2);
  });

  it("each estimate lies within 4 SEs of the truth", () => {
    const misses = standardised.filter((s) => Math.abs(s.z) > 4).map((s) => `${s.label}: z = ${s.z.toFixed(2)}`);
    expect(misses).toEqual([]);
  });

  it("at least 90% lie within 2 SEs, without bias, with SEs of the right size", () => {
    const m = standardised.length;
    const within2 = standardised.filter((s) => Math.abs(s.z) <= 2).length / m;
    const mean = standardised.reduce((sum, s) => sum + s.z, 0) / m;
    const sd = Math.sqrt(standardised.reduce((sum, s) => sum + (s.z - mean) ** 2, 0) / (m - 1));
    expect(within2).toBeGreaterThanOrEqual(0.9);
    expect(Math.abs(mean)).toBeLessThanOrEqual(3 / Math.sqrt(m));
    expect(sd).toBeGreaterThan(0.7);
    expect(sd).toBeLessThan(1.3);
  });
});
