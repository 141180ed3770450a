import { describe, expect, it } from "vitest";
import { fitGaussianPeak } from "@/lib/stats/phenology/fit-gaussian-peak";
import { fitWarmingRate } from "@/lib/stats/phenology/fit-warming-rate";
import { ModelInputError } from "@/lib/stats/model-error";
import { expectClose } from "@/test/helpers/expect-close";
import { readRFixture } from "@/test/helpers/r-fixture";

interface FrassCase {
  date: number[];
  frass: number[];
  height: number;
  height_se: number;
  peak: number;
  peak_se: number;
  width: number;
  width_se: number;
  residual_se: number;
  df: number;
}
const frass = readRFixture<Record<"season" | "early_cut", FrassCase>>("brood-nls-frass.json");

describe("Gaussian food-peak curve by Levenberg-Marquardt against R's nls (tol 1e-9)", () => {
  for (const key of ["season", "early_cut"] as const) {
    it(`${key}: parameters and SEs to 1e-6 relative`, () => {
      const reference = frass[key];
      const fit = fitGaussianPeak(reference.date, reference.frass);
      expect(fit.converged).toBe(true);
      expectClose(fit.peakDate.estimate, reference.peak, { rtol: 1e-6, label: "peak date" });
      expectClose(fit.peakDate.standardError, reference.peak_se, { rtol: 1e-6, label: "peak SE" });
      expectClose(fit.height.estimate, reference.height, { rtol: 1e-6, label: "height" });
      expectClose(fit.height.standardError, reference.height_se, { rtol: 1e-6, label: "height SE" });
      expectClose(fit.width.estimate, reference.width, { rtol: 1e-6, label: "width" });
      expectClose(fit.width.standardError, reference.width_se, { rtol: 1e-6, label: "width SE" });
      expectClose(fit.residualStandardError, reference.residual_se, { rtol: 1e-6, label: "residual SE" });
      expect(fit.residualDf).toBe(reference.df);
    });
  }

  it("flags a peak outside the sampled dates (sampling stopped before the peak)", () => {
    const dates = [100, 103, 106, 109, 112, 115, 118, 121];
    const values = dates.map((d) => 3 * Math.exp(-((d - 130) ** 2) / (2 * 6 ** 2)) + 0.01 * (1 + Math.sin(d)));
    const fit = fitGaussianPeak(dates, values);
    expect(fit.plausible).toBe(false);
    expect(fit.warnings.map((w) => w.message).join(" ")).toMatch(/outside the sampled dates 100-121/);
  });

  it("flags an implausible width", () => {
    const dates = Array.from({ length: 30 }, (_, i) => 100 + 3 * i);
    const values = dates.map((d) => 2 * Math.exp(-((d - 140) ** 2) / (2 * 80 ** 2)) + 0.02 * (1 + Math.cos(d)));
    const fit = fitGaussianPeak(dates, values);
    expect(fit.plausible).toBe(false);
    expect(fit.warnings.some((w) => w.code === "implausible_fit" && /width/.test(w.message))).toBe(true);
  });

  it("refuses too few points, negative or non-finite frass, and a series of zeros", () => {
    expect(() => fitGaussianPeak([1, 2, 3], [1, 2, 1])).toThrow(/at least 4/);
    expect(() => fitGaussianPeak([1, 2, 3, 4], [1, -2, 1, 0])).toThrow(/>= 0/);
    expect(() => fitGaussianPeak([1, 2, 3, 4], [1, NaN, 1, 0])).toThrow(ModelInputError);
    expect(() => fitGaussianPeak([1, 2, 3, 4], [0, 0, 0, 0])).toThrow(/every frass value is 0/);
    expect(() => fitGaussianPeak([1, 1, 2, 2], [0, 1, 1, 0])).toThrow(/3 distinct dates/);
  });
});

describe("warming rate", () => {
  const fixture = readRFixture<{
    years: number[];
    temperature: number[];
    ls_slope_per_decade: number;
    ls_se_per_decade: number;
    theil_sen_per_decade: number;
  }>("brood-lm-warming.json");

  it("least-squares slope per decade and SE match R's lm; Theil-Sen matches base R's median of pairwise slopes", () => {
    const result = fitWarmingRate(fixture.years, fixture.temperature);
    expectClose(result.slopePerDecade, fixture.ls_slope_per_decade, { rtol: 1e-9, label: "LS slope" });
    expectClose(result.standardError, fixture.ls_se_per_decade, { rtol: 1e-9, label: "LS SE" });
    expectClose(result.theilSenPerDecade, fixture.theil_sen_per_decade, { rtol: 1e-12, label: "Theil-Sen" });
    expect(result.n).toBe(40);
    expect(result.residualDf).toBe(38);
  });

  it("refuses fewer than 3 years and repeated years", () => {
    expect(() => fitWarmingRate([2000, 2001], [9, 10])).toThrow(/at least 3 years/);
    expect(() => fitWarmingRate([2000, 2000, 2001], [9, 10, 11])).toThrow(/once/);
    expect(() => fitWarmingRate([2000, 2001, 2002], [9, Infinity, 11])).toThrow(/finite/);
  });
});
