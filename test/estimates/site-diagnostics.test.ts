/**
 * Site diagnostics read the estimates' own definitions. Reference: the simulated broods of
 * test/fixtures/r-stats/brood-estimates-fixtures.R (regime many-broods, seed 4101) with R's
 * between-year slope from lm(y ~ m, weights = n) on the annual means and R's glm coefficients of
 * c and c^2: the annual points computed here, refitted by weighted least squares, give R's slope,
 * and the curve drawn from R's coefficients has exactly their shape on the link scale.
 */
import { describe, expect, it } from "vitest";
import { siteDiagnostics, diagnosticBinWidth, type StoredDiagnosticEstimates } from "@/lib/estimates/site-diagnostics";
import type { BroodForEstimates } from "@/lib/estimates/estimate-types";
import { designMatrix } from "@/lib/stats/linear/design-matrix";
import { fitWeightedLeastSquares } from "@/lib/stats/regression/fit-weighted-least-squares";
import { expectClose } from "@/test/helpers/expect-close";
import { readRFixture } from "@/test/helpers/r-fixture";

interface Coef { estimate: number; se: number }
interface Fixture {
  broods: { year: number[]; female_id: string[]; lay_date: number[]; clutch_size: number[]; hatch_date: number[]; fledglings: number[]; recruits: number[] };
  food_peaks: { year: number[]; food_peak_date: number[] };
  outcomes: Record<string, { pooled: { n: number; linear: Coef; quadratic: Coef }; between_year: { slope: number } | null }>;
}

const fixture = readRFixture<Fixture>("brood-glm-many-broods.json");
const broods: BroodForEstimates[] = fixture.broods.year.map((year, i) => ({
  year,
  femaleId: fixture.broods.female_id[i]!,
  layDateDoy: fixture.broods.lay_date[i]!,
  hatchDateDoy: fixture.broods.hatch_date[i]!,
  clutchSize: fixture.broods.clutch_size[i]!,
  fledglings: fixture.broods.fledglings[i]!,
  recruits: fixture.broods.recruits[i]!,
}));
const peaks = new Map(fixture.food_peaks.year.map((y, k) => [y, fixture.food_peaks.food_peak_date[k]!]));
const definition = { basis: "lay_date" as const, offsetDays: 30 };

function storedFromR(outcome: string): StoredDiagnosticEstimates {
  const r = fixture.outcomes[outcome]!;
  return { withinYear: { linear: r.pooled.linear.estimate, quadratic: r.pooled.quadratic.estimate }, betweenYearSlope: r.between_year!.slope };
}

describe.each(["recruitment", "fledging_failure", "fledglings_successful", "recruits_per_female"] as const)("site diagnostics of %s (R fixture many-broods)", (outcome) => {
  const result = siteDiagnostics(broods, peaks, definition, outcome, storedFromR(outcome));

  it("annual means refitted by weighted least squares give R's between-year slope (1e-10)", () => {
    const x = new Float64Array(2 * result.annual.length);
    result.annual.forEach((a, k) => {
      x[2 * k] = 1;
      x[2 * k + 1] = a.meanMismatch;
    });
    const fit = fitWeightedLeastSquares(designMatrix(result.annual.length, ["intercept", "m"], x), result.annual.map((a) => a.meanOutcome), { weights: result.annual.map((a) => a.broods) });
    expectClose(fit.coefficients[1]!, fixture.outcomes[outcome]!.between_year!.slope, { rtol: 1e-10, label: "slope (R lm)" });
    // The line drawn is that fit: stored slope, intercept through the weighted means.
    expect(result.line.available).toBe(true);
    if (result.line.available) expectClose(result.line.intercept, fit.coefficients[0]!, { rtol: 1e-10, atol: 1e-12, label: "intercept" });
  });

  it("bins hold every brood of the outcome, each bin's mean c inside it", () => {
    expect(result.broods).toBe(fixture.outcomes[outcome]!.pooled.n);
    expect(result.bins.reduce((s, b) => s + b.broods, 0)).toBe(result.broods);
    for (const bin of result.bins) {
      expect(bin.to - bin.from).toBe(result.binWidth);
      expect(bin.meanWithin).toBeGreaterThanOrEqual(bin.from);
      expect(bin.meanWithin).toBeLessThan(bin.to);
    }
    const weightedMean = result.bins.reduce((s, b) => s + b.broods * b.meanOutcome, 0) / result.broods;
    expectClose(weightedMean, result.overallMean!, { rtol: 1e-12, label: "bins average to the overall mean" });
  });

  it("draws R's c and c^2 coefficients about the overall mean: g(mu(c)) - g(mean) = b1 c + b2 c^2", () => {
    expect(result.curve.available).toBe(true);
    if (!result.curve.available) return;
    const { linear, quadratic, within, fitted } = result.curve;
    const g = result.outcome.family.linkOf;
    within.forEach((c, i) => expectClose(g(fitted[i]!) - g(result.overallMean!), linear * c + quadratic * c * c, { atol: 1e-9, label: `link-scale curve at c = ${c}` }));
  });
});

describe("site diagnostics, hostile input", () => {
  it("says why a curve is missing when the site has no stored estimates", () => {
    const result = siteDiagnostics(broods, peaks, definition, "recruitment", { withinYear: { missing: "no within-year estimates stored" }, betweenYearSlope: { missing: "no between-year estimate stored" } });
    expect(result.curve).toEqual({ available: false, reason: "no within-year estimates stored" });
    expect(result.line).toEqual({ available: false, reason: "no between-year estimate stored" });
    expect(result.bins.length).toBeGreaterThan(3);
  });

  it("uses no brood of a year without a food peak, and names those years", () => {
    const result = siteDiagnostics(broods, new Map(), definition, "recruitment", storedFromR("recruitment"));
    expect(result.broods).toBe(0);
    expect(result.curve.available).toBe(false);
    expect(result.yearsWithoutFoodPeak).toHaveLength(12);
  });

  it("refuses a curve when the outcome never occurs (no logit of 0)", () => {
    const none = broods.map((b) => ({ ...b, recruits: 0 }));
    const result = siteDiagnostics(none, peaks, definition, "recruitment", storedFromR("recruitment"));
    expect(result.curve).toEqual({ available: false, reason: "the overall proportion is 0, so it has no logit" });
  });

  it("picks bin widths from a fixed list, at most 15 bins", () => {
    expect(diagnosticBinWidth(20)).toBe(2);
    expect(diagnosticBinWidth(60)).toBe(4);
    expect(diagnosticBinWidth(0)).toBe(1);
    expect(diagnosticBinWidth(3000)).toBe(200);
  });
});
